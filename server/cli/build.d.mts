/** The project folder. */
export const ROOT: string;
/** Bundles server/cli/main.ts into outdir/sallyport.mjs (default build/cli) with inputs.json beside it; resolves to the bundle's path. */
export function buildCli(outdir?: string): Promise<string>;
