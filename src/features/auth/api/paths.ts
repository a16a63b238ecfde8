/** The account API's URL paths and the auth pages, defined once. */
export const authPaths = {
  me: "/api/me",
  session: "/api/session",
  config: "/api/config",
  signIn: "/api/auth/sign-in/email",
  signOut: "/api/auth/sign-out",
  requestPasswordReset: "/api/auth/request-password-reset",
  resetPassword: "/api/auth/reset-password",
  shopSignUp: "/api/shops/sign-up",
  expertApply: "/api/experts/apply",
  invitePreview: "/api/invites/preview",
  inviteAccept: "/api/invites/accept",
};

export const authPages = {
  signIn: "/sign-in",
  signUp: "/sign-up",
  apply: "/apply",
  acceptInvite: "/accept-invite",
  forgotPassword: "/forgot-password",
  resetPassword: "/reset-password",
  devMail: "/dev/mail",
};

export const authKeys = {
  me: ["me"] as const,
  config: ["config"] as const,
  invite: (token: string) => ["invite-preview", token] as const,
};
