// Password rules after NIST SP 800-63B: length only, no composition rules, every character
// (spaces and Unicode included) accepted, and a check against common, repetitive and
// context-specific values with the reason said. Shared by server validation and the forms.

/** NIST SP 800-63B rev 4 §3.1.1.2: at least 15 characters when a password is the only factor. */
export const PASSWORD_MIN_LENGTH = 15;
/** NIST SP 800-63B: verifiers should permit at least 64 characters; we allow 128. */
export const PASSWORD_MAX_LENGTH = 128;

// Commonly used and breached passwords (a short local list; no network look-up here).
const COMMON_PASSWORDS = new Set([
  "123456789012345", "1234567890123456", "passwordpassword", "password1234567", "qwertyuiopasdfg",
  "qwertyuiopasdfgh", "iloveyouiloveyou", "letmeinletmein1", "administrator1", "administrator123",
  "welcome12345678", "changemechangeme", "correcthorsebatterystaple", "trustno1trustno1",
  "p@ssw0rdp@ssw0rd", "adminadminadmin", "rootrootrootroot", "default-password",
]);

function graphemeLength(value: string): number {
  return [...value].length;
}

function isRepetitive(value: string): boolean {
  const characters = [...value.toLowerCase()];
  if (new Set(characters).size <= 2) return true;
  // Runs such as "abcdefgh…" or "987654…" throughout.
  let ascending = true;
  let descending = true;
  for (let index = 1; index < characters.length; index++) {
    const step = characters[index].codePointAt(0)! - characters[index - 1].codePointAt(0)!;
    if (step !== 1) ascending = false;
    if (step !== -1) descending = false;
  }
  return ascending || descending;
}

/** Returns the reason a new password is refused, or null when it is acceptable. */
export function findPasswordProblem(password: string, context: { email?: string; name?: string } = {}): string | null {
  const length = graphemeLength(password.normalize("NFKC"));
  if (length < PASSWORD_MIN_LENGTH) return `Use at least ${PASSWORD_MIN_LENGTH} characters (a few words with spaces work well).`;
  if (length > PASSWORD_MAX_LENGTH) return `Use at most ${PASSWORD_MAX_LENGTH} characters.`;
  const lower = password.toLowerCase();
  if (COMMON_PASSWORDS.has(lower)) return "This password is on a list of commonly used passwords; choose another.";
  if (isRepetitive(password)) return "This password is too repetitive or sequential; choose another.";
  const localPart = context.email?.split("@")[0]?.toLowerCase();
  if (localPart && localPart.length >= 4 && lower.includes(localPart)) return "Do not include your e-mail address in the password.";
  if (lower.includes("sallyport")) return "Do not include the name of this service in the password.";
  return null;
}
