import { useEffect, useState } from "react";

/**
 * The value, once it has stopped changing for `ms` (so that wheel zoom does not fire a fetch per
 * tick). `equal` decides what counts as a change; the first value is returned at once.
 */
export function useDebouncedValue<T>(value: T, ms: number, equal: (a: T, b: T) => boolean = Object.is): T {
  const [settled, setSettled] = useState(value);
  const same = equal(settled, value);
  useEffect(() => {
    if (same) return;
    const id = setTimeout(() => setSettled(value), ms);
    return () => clearTimeout(id);
  }, [value, ms, same]);
  return settled;
}
