// The headline of a reach table in words, for one device (its interfaces × services) and for the
// fleet (its devices): each place counted once, by the most any of the asked sources gets there.
// Pure; counts and plurals through server/engine/format.ts.
import { formatNumber, plural, pluralWord, type PluralForms } from "#server/engine/format";
import { outcomeRank, presentsLogin, type Outcome } from "#server/engine/vocabulary";

/** The most exposed outcome per place (a key such as "interface service"), from rows that may hold several groups per place. */
export function worstByPlace<Row extends { outcome: Outcome }>(rows: readonly Row[], placeOf: (row: Row) => string): Outcome[] {
  const worst = new Map<string, Outcome>();
  for (const row of rows) {
    const key = placeOf(row);
    const known = worst.get(key);
    if (known === undefined || outcomeRank(row.outcome) > outcomeRank(known)) worst.set(key, row.outcome);
  }
  return [...worst.values()];
}

/**
 * "reaches 2 services with a login (2 with a password only), 1 answers, 15 give no answer" —
 * `places` names what is counted ("service", "device"). The logins are always said (none is
 * news too); the other outcomes only when some place gets them, so a zero never reads as if it
 * contradicted rows of the table.
 */
export function reachSummary(outcomes: readonly Outcome[], places: PluralForms): string {
  const count = (wanted: readonly Outcome[]) => outcomes.filter((outcome) => wanted.includes(outcome)).length;
  const logins = outcomes.filter((outcome) => presentsLogin(outcome)).length;
  const loginDetail = (
    [
      [count(["login-password"]), "with a password only"],
      [count(["login-mfa"]), "with a second factor"],
      [count(["login-denied"]), "shown but refused"],
    ] as const
  )
    .filter(([n]) => n > 0)
    .map(([n, words]) => `${formatNumber(n)} ${words}`)
    .join(", ");
  const verb = (n: number, forms: PluralForms) => `${formatNumber(n)} ${pluralWord(n, forms)}`;
  const others = (
    [
      [count(["answered"]), { one: "answers", other: "answer" }],
      [count(["refused"]), { one: "refuses and reveals the device", other: "refuse and reveal the device" }],
      [count(["silent"]), { one: "gives no answer", other: "give no answer" }],
    ] as const
  )
    .filter(([n]) => n > 0)
    .map(([n, forms]) => verb(n, forms));
  return [`reaches ${plural(logins, places)} with a login${loginDetail ? ` (${loginDetail})` : ""}`, ...others].join(", ");
}
