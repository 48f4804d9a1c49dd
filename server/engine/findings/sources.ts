// The published sources the checks cite (or "common practice, no source").
export const SOURCES = {
  defaultAccount: "PCI DSS v4.0 2.2.2; CIS Controls v8 4.7",
  restrictSources: "NIST SP 800-53 rev 5 AC-17; CIS Controls v8 12.3",
  mfa: "PCI DSS v4.0 8.4.1; NIST SP 800-53 rev 5 IA-2(1); CIS Controls v8 6.5",
  cleartext: "CIS Controls v8 4.6; PCI DSS v4.0 2.2.7",
  exposure: "NIST SP 800-53 rev 5 AC-17; CIS Controls v8 12.3; common practice, no source (any reply reveals the device)",
  ping: "CIS Controls v8 4.8; common practice, no source (any reply reveals the device)",
  ruleOrder: "common practice, no source (inbound rules are read top to bottom, first match wins)",
  defaultDeny: "NIST SP 800-41 rev 1 (default deny); NIST SP 800-53 rev 5 SC-7(5)",
  lockout: "common practice, no source (keep a tested break-glass path)",
  hygiene: "common practice, no source",
} as const;
