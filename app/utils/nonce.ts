import { createContext, useContext } from "react";

/** The CSP nonce of this response, handed from entry.server to the inline <Scripts>. */
export const NonceContext = createContext<string | undefined>(undefined);

export function useNonce(): string | undefined {
  return useContext(NonceContext);
}
