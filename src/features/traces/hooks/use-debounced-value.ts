import { useEffect, useState } from "react";

/** The value, once it has stopped changing for `ms` (used so that wheel zoom does not fire a fetch per tick). */
export function useDebouncedValue<T>(value: T, ms: number, equal: (a: T, b: T) => boolean = Object.is): T {
  const [v, setV] = useState(value);
  useEffect(() => {
    if (equal(v, value)) return;
    const id = setTimeout(() => setV(value), ms);
    return () => clearTimeout(id);
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [value, ms]);
  return v;
}
