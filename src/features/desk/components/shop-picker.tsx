import { useId } from "react";
import { useCaseFilters } from "../api/admin-actions";

/** The admin's choice of shop (for its billing). */
export function ShopPicker({ value, onChange }: { value: string; onChange: (shopId: string) => void }) {
  const f = useCaseFilters(true);
  const id = useId();
  return (
    <div className="max-w-md">
      <label htmlFor={id} className="mb-1 block text-sm font-semibold text-ink-800">
        Shop
      </label>
      <select
        id={id}
        value={value}
        onChange={(e) => onChange(e.target.value)}
        className="block min-h-11 w-full rounded-lg border border-ink-300 bg-white px-3"
      >
        <option value="">Choose a shop</option>
        {(f.data?.shops ?? []).map((s) => (
          <option key={s.id} value={s.id}>
            {s.name}
          </option>
        ))}
      </select>
    </div>
  );
}
