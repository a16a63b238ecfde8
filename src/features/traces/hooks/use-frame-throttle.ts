import { useCallback, useEffect, useLayoutEffect, useRef } from "react";

/** Calls fn at most once per animation frame with the latest value (the last one is never dropped). */
export function useFrameThrottle<T>(fn: ((v: T) => void) | undefined): (v: T) => void {
  const fnRef = useRef(fn);
  const latest = useRef<{ v: T } | null>(null);
  const frame = useRef<number | null>(null);
  useLayoutEffect(() => {
    fnRef.current = fn;
  });
  useEffect(
    () => () => {
      if (frame.current != null) cancelAnimationFrame(frame.current);
    },
    [],
  );
  return useCallback((v: T) => {
    if (!fnRef.current) return;
    latest.current = { v };
    if (frame.current != null) return;
    frame.current = requestAnimationFrame(() => {
      frame.current = null;
      const l = latest.current;
      latest.current = null;
      if (l) fnRef.current?.(l.v);
    });
  }, []);
}
