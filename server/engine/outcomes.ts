// Outcomes, least to most exposed. Everything above "silent" tells an outsider the device exists.

export const OUTCOMES = ["silent", "refused", "answered", "login-denied", "login-mfa", "login-password"] as const;
export type Outcome = (typeof OUTCOMES)[number];

export const SILENT = 0;
export const REFUSED = 1;
export const ANSWERED = 2;
export const LOGIN_DENIED = 3;
export const LOGIN_MFA = 4;
export const LOGIN_PASSWORD = 5;

export type OutcomeRecord<T> = Record<Outcome, T>;

export function outcomeRecord<T>(make: (outcome: Outcome, index: number) => T): OutcomeRecord<T> {
  const out = {} as OutcomeRecord<T>;
  OUTCOMES.forEach((o, i) => {
    out[o] = make(o, i);
  });
  return out;
}

export const LAYERS = ["arrival", "inbound-rules", "listener", "service-kind", "login-sources", "second-factor"] as const;
export type Layer = (typeof LAYERS)[number];
