// User-facing sentences shared by the server and the sign-in form. No server
// imports here: the client bundle reads this file.

export const SIGN_IN_ERROR_CODES = { invalid: "CredentialsSignin", throttled: "Throttled" } as const;

export const SIGN_IN_MESSAGES = {
  // The same sentence for an unknown address and a wrong password, so the form
  // never tells anyone which addresses have accounts.
  invalid: "That e-mail address and password do not match an account. Check both and try again.",
  throttled: "Too many sign-in attempts for this address or network. Wait 15 minutes, then try again.",
  unknown: "Signing in did not work just now. Try again in a moment.",
} as const;

export function signInMessage(code: string | null | undefined): string | null {
  if (!code) return null;
  if (code === SIGN_IN_ERROR_CODES.throttled) return SIGN_IN_MESSAGES.throttled;
  if (code === SIGN_IN_ERROR_CODES.invalid) return SIGN_IN_MESSAGES.invalid;
  return SIGN_IN_MESSAGES.unknown;
}
