import { z } from "zod";
import type { ProbeInput } from "../engine/index.ts";

/** A probe from URL search parameters: the same names as the CLI's options where they exist. */
export const ProbeQuerySchema = z.object({
  from: z.string().trim().min(1, "Enter the source address.").max(100, "That address is too long."),
  interface: z.string().trim().min(1, "Choose the interface the probe arrives on.").max(63),
  service: z.string().trim().min(1, "Choose a service.").max(63),
  to: z.string().trim().max(100).optional().transform((value) => value || undefined),
  at: z.string().trim().max(40).optional().transform((value) => value || undefined),
  account: z.string().trim().max(63).optional().transform((value) => value || undefined),
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
