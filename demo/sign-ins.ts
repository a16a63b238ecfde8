/** The demo accounts (all verified), shown on the sign-in page in demo mode and printed by `npm start`. */
export const DEMO_PASSWORD = "burnline-demo";

export const DEMO_SIGN_INS: { email: string; label: string }[] = [
  { email: "tech@burnline.test", label: "Technician at Cinderwick Auto Works" },
  { email: "owner@burnline.test", label: "Owner of Cinderwick Auto Works (same shop as the technician)" },
  { email: "expert@burnline.test", label: "Expert, approved, ignition specialist" },
  { email: "admin@burnline.test", label: "Desk admin" },
];
