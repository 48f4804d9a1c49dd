// Property tests (fast-check) run from a fixed seed by default, so every run — and any failure —
// replays exactly. SALLYPORT_PROPERTY_SEED=random draws a new seed for the run (to explore);
// SALLYPORT_PROPERTY_SEED=<integer> replays the seed a failure report printed. Each property has a
// time bound: its Vitest timeout, and fast-check stops a little before it, as a failure whose
// report names the seed — never a bare Vitest timeout that says nothing about what ran.

import fc from "fast-check";

/** The seed when none is asked for. Any fixed value would do; this is the benchmark's. */
export const DEFAULT_PROPERTY_SEED = 20250301;

/** The seed a setting asks for: unset → the default, "random" → a new one, an integer → that one. */
export function propertySeed(setting: string | undefined): number {
  const text = setting?.trim() ?? "";
  if (text === "") return DEFAULT_PROPERTY_SEED;
  if (text === "random") return Math.floor(Math.random() * 2 ** 31);
  const seed = Number(text);
  // fast-check seeds are 32-bit integers.
  if (!/^-?\d+$/.test(text) || seed < -(2 ** 31) || seed >= 2 ** 31) {
    throw new Error(`SALLYPORT_PROPERTY_SEED must be "random" or a 32-bit integer, not "${setting}"`);
  }
  return seed;
}

export const PROPERTY_SEED = propertySeed(process.env.SALLYPORT_PROPERTY_SEED);
if (PROPERTY_SEED !== DEFAULT_PROPERTY_SEED) {
  console.info(`fast-check seed ${PROPERTY_SEED} (replay with SALLYPORT_PROPERTY_SEED=${PROPERTY_SEED})`);
}

/** How much one property test may do: fast-check's runs, and the Vitest timeout they must fit in. */
export interface PropertyBudget {
  readonly numRuns: number;
  readonly timeoutMs: number;
}

/** fast-check stops at this share of the Vitest timeout, leaving room to shrink and report. */
const INTERRUPT_SHARE = 0.75;

/** fast-check's parameters for a property with this budget: the run's seed, the runs, the time bound. */
export function propertyParameters<Ts>(budget: PropertyBudget): fc.Parameters<Ts> {
  return {
    seed: PROPERTY_SEED,
    numRuns: budget.numRuns,
    plugins: [fc.interruptAfterTimeLimit(Math.floor(budget.timeoutMs * INTERRUPT_SHARE), { failOnInterrupt: true })],
  };
}
