/** The URL of root/build/cli/sallyport.mjs when it is at least as new as every input listed beside it; null otherwise. */
export function freshBundle(root: URL): URL | null;
