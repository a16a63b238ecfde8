import { PASSWORD_MAX, PASSWORD_MIN } from "../../../../shared/schemas/auth";

export const passwordHint =
  `${PASSWORD_MIN}–${PASSWORD_MAX} characters. A few unrelated words work well; passwords that are easy to ` +
  "guess (common ones, Burnline's own words, your name or shop's name) are refused.";
