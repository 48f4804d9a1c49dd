// Account checks: factory-default names, no login sources, no second factor, very broad login sources.
import { countOf } from "../../address-sets.ts";
import { formatCount } from "../../format.ts";
import { elementRef, isBuiltinAddressName } from "../../vocabulary.ts";
import { SOURCES } from "../sources.ts";
import type { CompiledAccount } from "../../compile.ts";
import type { FindingContext } from "../context.ts";
import type { Finding, FindingCheck } from "../types.ts";

/**
 * A check's findings that follow from the accounts alone: the basis's own objects while the
 * model shares its basis's compiled accounts (compileModel re-uses them when only the rules
 * changed), so an edit of rules makes none of them again.
 */
function ofAccounts(context: FindingContext, code: string, compute: () => Finding[]): Finding[] {
  const accounts = context.engine.accounts;
  return context.kept<{ readonly accounts: readonly CompiledAccount[]; readonly findings: Finding[] }>(`accounts|${code}`, (previous) =>
    previous !== undefined && previous.accounts === accounts ? previous : { accounts, findings: compute() },
  ).findings;
}

/** Factory-default administrator names scanners try first (common practice, no source). */
export const DEFAULT_ACCOUNT_NAMES = ["admin", "administrator", "root", "superuser", "supervisor", "sysadmin", "guest", "default", "support"];

export const defaultAccountName: FindingCheck = {
  code: "default-account-name",
  severityRule: "high when the account is enabled, low when disabled",
  source: SOURCES.defaultAccount,
  check: (context) =>
    ofAccounts(context, "default-account-name", () =>
      context.engine.accounts
        .filter((account) => DEFAULT_ACCOUNT_NAMES.includes(account.name.toLowerCase()))
        .map((account): Finding => ({
          code: "default-account-name",
          severity: account.enabled ? "high" : "low",
          title: `Account "${account.name}" has a factory-default name`,
          detail: `Scanners try default administrator names first; rename it to a named, non-standard account${account.enabled ? "" : " (it is disabled; remove it)"}.`,
          elements: [elementRef("account", account.name)],
          source: SOURCES.defaultAccount,
        })),
    ),
};

export const unrestrictedAccount: FindingCheck = {
  code: "unrestricted-account",
  severityRule: "high",
  source: SOURCES.restrictSources,
  check: (context) =>
    ofAccounts(context, "unrestricted-account", () =>
      context.engine.accounts
        .filter((account) => account.enabled && context.model.accounts[account.index].loginSources.length === 0)
        .map((account): Finding => ({
          code: "unrestricted-account",
          severity: "high",
          title: `Account "${account.name}" may log in from anywhere`,
          detail: "It has no login sources; list the operator networks it may log in from.",
          elements: [elementRef("account", account.name)],
          source: SOURCES.restrictSources,
        })),
    ),
};

export const noSecondFactor: FindingCheck = {
  code: "no-second-factor",
  severityRule: "high",
  source: SOURCES.mfa,
  check: (context) =>
    ofAccounts(context, "no-second-factor", () =>
      context.engine.accounts
        .filter((account) => account.enabled && !account.secondFactor)
        .map((account): Finding => ({
          code: "no-second-factor",
          severity: "high",
          title: `Account "${account.name}" has no second factor`,
          detail: "A password alone logs in; require TOTP (RFC 6238) on every administrator account.",
          elements: [elementRef("account", account.name)],
          source: SOURCES.mfa,
        })),
    ),
};

export const broadLoginSources: FindingCheck = {
  code: "broad-login-sources",
  severityRule: "medium",
  source: SOURCES.restrictSources,
  check: (context) =>
    ofAccounts(context, "broad-login-sources", () =>
      context.engine.accounts.flatMap((account) => {
        const listed = context.model.accounts[account.index].loginSources;
        if (!account.enabled || listed.length === 0) return [];
        const names = listed.filter(isBuiltinAddressName);
        const v4 = countOf(account.loginSources.v4);
        const v6 = countOf(account.loginSources.v6);
        if (names.length === 0 && v4 < 1n << 24n && v6 < 1n << 96n) return [];
        const finding: Finding = {
          code: "broad-login-sources",
          severity: "medium",
          title: `Account "${account.name}" has very broad login sources`,
          detail: `Login sources cover ${formatCount(v4).text} IPv4 and ${formatCount(v6).text} IPv6 addresses${names.length > 0 ? ` (including "${names.join('", "')}")` : ""}; thresholds: 2^24 IPv4 or 2^96 IPv6 (a /32) addresses.`,
          elements: [elementRef("account", account.name)],
          source: SOURCES.restrictSources,
        };
        return [finding];
      }),
    ),
};
