import { useCallback, useState, useSyncExternalStore } from "react";

/**
 * The content width of an element in CSS px, or null until the element is in the page: pass the
 * returned callback as its `ref`. The first width is read while the page is laid out, before
 * anything is painted or fetched, and followed with a ResizeObserver afterwards.
 */
export function useElementWidth(): [(el: HTMLElement | null) => void, number | null] {
  const [el, setEl] = useState<HTMLElement | null>(null);
  const subscribe = useCallback(
    (onChange: () => void) => {
      if (!el) return () => {};
      if (typeof ResizeObserver === "undefined") {
        window.addEventListener("resize", onChange);
        return () => window.removeEventListener("resize", onChange);
      }
      const ro = new ResizeObserver(onChange);
      ro.observe(el);
      return () => ro.disconnect();
    },
    [el],
  );
  const width = useSyncExternalStore(
    subscribe,
    () => (el ? Math.max(0, Math.floor(el.getBoundingClientRect().width)) : null),
    () => null,
  );
  return [setEl, width];
}
