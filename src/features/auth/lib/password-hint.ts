import { PASSWORD_MAX, PASSWORD_MIN } from "../../../../shared/schemas/auth";

export const passwordHint = `${PASSWORD_MIN}–${PASSWORD_MAX} characters. A few unrelated words work well; very common passwords are refused.`;
