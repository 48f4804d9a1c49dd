import { z } from "zod";
import type { ProbeInput } from "../engine/index.ts";

/** A probe from URL search parameters: the same names as the CLI's options where they exist. */
/** An optional text parameter: trimmed, bounded, and absent when empty. */
function optionalText(max: number, description: string) {
  return z
    .string()
    .trim()
    .max(max)
    .optional()
    .transform((value) => value || undefined)
    .meta({ description });
}

export const ProbeQuerySchema = z.object({
  from: z.string().trim().min(1, "Enter the source address.").max(100, "That address is too long.").meta({ description: "The source address (IPv4 or IPv6)." }),
  interface: z.string().trim().min(1, "Choose the interface the probe arrives on.").max(63).meta({ description: "The interface the probe arrives on." }),
  service: z.string().trim().min(1, "Choose a service.").max(63).meta({ description: "A catalogue service, or tcp/PORT, udp/PORT, icmp/echo." }),
  to: optionalText(100, "A device address; default: the interface's first address in the family of `from`."),
  at: optionalText(40, "An instant: ISO 8601 with an offset (2026-12-02T16:00Z), or a wall-clock time on the device's clock (2026-12-02T10:00). Default: now."),
  account: optionalText(63, "Consider only this account at the login layers."),
});

export type ProbeQuery = z.infer<typeof ProbeQuerySchema>;

export function probeQueryOf(searchParams: URLSearchParams): Record<string, string> {
  const values: Record<string, string> = {};
  for (const key of ["from", "interface", "service", "to", "at", "account"]) {
    const value = searchParams.get(key);
    if (value !== null) values[key] = value;
  }
  return values;
}

export function probeInputOf(query: ProbeQuery): ProbeInput {
  return { from: query.from, interface: query.interface, service: query.service, to: query.to, at: query.at, account: query.account };
}
