import { useCallback, useSyncExternalStore } from "react";

/** Whether a CSS media query matches, kept up to date (false where matchMedia is missing). */
export function useMediaQuery(query: string): boolean {
  const subscribe = useCallback(
    (onChange: () => void) => {
      if (typeof window === "undefined" || !window.matchMedia) return () => {};
      const m = window.matchMedia(query);
      m.addEventListener("change", onChange);
      return () => m.removeEventListener("change", onChange);
    },
    [query],
  );
  const get = () => typeof window !== "undefined" && !!window.matchMedia && window.matchMedia(query).matches;
  return useSyncExternalStore(subscribe, get, () => false);
}

/** A touch screen without a hovering pointer: keyboard hints are left out there. */
export const TOUCH_QUERY = "(hover: none), (pointer: coarse)";

export const useTouchScreen = () => useMediaQuery(TOUCH_QUERY);
