/** A concrete probe as the engine's witnesses carry it. */
export interface WitnessProbe {
  from: string;
  interface: string;
  service: string;
  to?: string | null;
  at: string;
}

/**
 * The trace page's query for a witness probe: the same fields the trace form writes, and
 * `reveal=all`, because someone checking a witness wants the whole trace, not the walkthrough's
 * first step.
 */
export function witnessQuery(probe: WitnessProbe): string {
  return new URLSearchParams({ from: probe.from, interface: probe.interface, service: probe.service, ...(probe.to ? { to: probe.to } : {}), at: probe.at, reveal: "all" }).toString();
}

/** The device's trace page opened on a witness probe. */
export function witnessTracePath(devicePath: string, probe: WitnessProbe): string {
  return `${devicePath}/analysis?${witnessQuery(probe)}`;
}
