import { totpCode } from "#server/auth/totp";

/** RFC 6238's time step. */
const STEP_MS = 30_000;
/** A code one step back is handed out only while at least this long is left in the step, so it is still in the window when the server checks it. */
const SAFE_MS = 20_000;

/**
 * Codes for successive uses within one test, as an authenticator app would show them: each use
 * takes the code of a later time step than the one before, within RFC 6238 §5.2's window of one
 * step either way of the moment it is asked for — one step back only while the step has at least
 * 20 s left, so the code cannot fall out of the window before the server checks it on a loaded
 * machine. A test needs no clock of its own and never reuses a code by accident (a code is
 * accepted once); when the next code would be two steps ahead, it waits for the next step.
 */
export function successiveCodes(secret: string): () => string {
  let last: number | undefined;
  return () => {
    let now = Date.now();
    let current = Math.floor(now / STEP_MS);
    const earliest = () => (STEP_MS - (now % STEP_MS) >= SAFE_MS ? current - 1 : current);
    let step = last === undefined ? earliest() : Math.max(last + 1, earliest());
    if (step > current + 1) {
      // Wait (blocking; no request is in flight) until the step after this one has begun.
      Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, STEP_MS - (now % STEP_MS) + 50);
      now = Date.now();
      current = Math.floor(now / STEP_MS);
      step = Math.max(last! + 1, earliest());
    }
    last = step;
    return totpCode(secret, step * STEP_MS + 1);
  };
}
