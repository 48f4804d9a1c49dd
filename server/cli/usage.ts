// The CLI's usage text and options: all that `sallyport --help` needs, so answering it loads
// no engine, parser or model reader (server/cli/main.ts imports the commands only for a command).

import { SEVERITIES } from "../engine/vocabulary.ts";

export const USAGE = `sallyport — management-plane exposure simulator

Usage:
  sallyport validate MODEL [--json]
  sallyport trace MODEL --from IP --on IFACE --service SVC [--to IP] [--at ISO] [--account NAME] [--json]
  sallyport trace MODEL --probes FILE.csv          (one JSON result per line)
  sallyport reach MODEL --from IP [--at ISO] [--json]
  sallyport exposure MODEL [--at ISO] [--json]
  sallyport findings MODEL [--fail-on SEVERITY] [--json]
  sallyport diff BEFORE AFTER [--fail-on-lockout] [--expectations FILE] [--json]
  sallyport check MODEL --observations FILE.csv [--json]

SVC is a catalogue service name, tcp/PORT, udp/PORT or icmp/echo. ISO times without an
offset are read on the device's clock. Severities: ${SEVERITIES.join(", ")}.
IP may be a CIDR block for trace and reach: the answer comes per group of sources
with the same answer. --expectations FILE checks an expectations file (docs/engine.md)
on both revisions. check predicts each observation of a field-check file (columns
when,from,to,service,observed[,interface][,note]; docs/field-checks.md) with MODEL.
Exit codes: 0 ok, 1 a --fail-on… condition met, an expectation that held no longer
does, or an observation that differs from the model, 2 usage or validation error
(check: also any row that could not be checked).
The simulation models the configuration, not the device: confirm on the device in a
maintenance window, and keep a tested break-glass path before restricting access.`;

export const OPTIONS = {
  json: { type: "boolean" },
  help: { type: "boolean", short: "h" },
  from: { type: "string" },
  on: { type: "string" },
  service: { type: "string" },
  to: { type: "string" },
  at: { type: "string" },
  account: { type: "string" },
  probes: { type: "string" },
  "fail-on": { type: "string" },
  "fail-on-lockout": { type: "boolean" },
  expectations: { type: "string" },
  observations: { type: "string" },
} as const;

export type Options = { [K in keyof typeof OPTIONS]?: (typeof OPTIONS)[K]["type"] extends "boolean" ? boolean : string };

export interface Io {
  /**
   * Standard output: text, or UTF-8 bytes (JSON; the CLI never writes a buffer again once
   * handed over). A returned promise means the reader is behind: nothing more is written
   * until it settles.
   */
  out(text: string | Uint8Array): void | Promise<void>;
  err(text: string): void;
}

