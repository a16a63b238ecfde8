/** Small line icons drawn for the viewer's toolbar (24 × 24 grid, currentColor). */
import type { ReactNode } from "react";

const Svg = ({ children }: { children: ReactNode }) => (
  <svg
    viewBox="0 0 24 24"
    width="20"
    height="20"
    fill="none"
    stroke="currentColor"
    strokeWidth="2"
    strokeLinecap="round"
    strokeLinejoin="round"
    aria-hidden="true"
  >
    {children}
  </svg>
);

export const IconZoomIn = () => (
  <Svg>
    <circle cx="10.5" cy="10.5" r="6.5" />
    <path d="M15.5 15.5 21 21M10.5 7.5v6M7.5 10.5h6" />
  </Svg>
);
export const IconZoomOut = () => (
  <Svg>
    <circle cx="10.5" cy="10.5" r="6.5" />
    <path d="M15.5 15.5 21 21M7.5 10.5h6" />
  </Svg>
);
/** a screen with its division grid */
export const IconCaptureView = () => (
  <Svg>
    <rect x="3" y="5" width="18" height="14" rx="1.5" />
    <path d="M9 5v14M15 5v14M3 12h18" strokeWidth="1.2" />
  </Svg>
);
export const IconPan = () => (
  <Svg>
    <path d="M12 3v18M3 12h18M12 3l-3 3M12 3l3 3M12 21l-3-3M12 21l3-3M3 12l3-3M3 12l3 3M21 12l-3-3M21 12l-3 3" />
  </Svg>
);
export const IconCursors = () => (
  <Svg>
    <path d="M8 3v18M16 3v18" strokeDasharray="3 2" />
    <path d="M3 9h18" strokeDasharray="3 2" strokeWidth="1.4" />
  </Svg>
);
export const IconFitLevels = () => (
  <Svg>
    <path d="M12 3v18M8 7l4-4 4 4M8 17l4 4 4-4M4 12h3M17 12h3" />
  </Svg>
);
/** a firing line and its spark line */
export const IconEvents = () => (
  <Svg>
    <path d="M3 18h4l2-14 2 11h8M20 15l1 3" />
  </Svg>
);
export const IconPin = () => (
  <Svg>
    <path d="M12 3v18" />
    <circle cx="12" cy="10" r="3" fill="currentColor" />
  </Svg>
);
export const IconSpan = () => (
  <Svg>
    <rect x="6" y="4" width="12" height="16" fill="currentColor" fillOpacity="0.2" strokeWidth="1.5" />
    <path d="M6 4v16M18 4v16" />
  </Svg>
);
export const IconLevel = () => (
  <Svg>
    <path d="M3 12h18" />
    <path d="M3 6h18M3 18h18" strokeWidth="1" strokeOpacity="0.4" />
  </Svg>
);
export const IconNote = () => (
  <Svg>
    <path d="M6 21V3" />
    <path d="M6 4h11l-3 4 3 4H6" fill="currentColor" fillOpacity="0.25" />
  </Svg>
);
