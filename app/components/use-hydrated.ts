import { useSyncExternalStore } from "react";

const noSubscription = () => () => {};

/** False while the server renders and while the client hydrates; true after. No mismatch. */
export function useHydrated(): boolean {
  return useSyncExternalStore(
    noSubscription,
    () => true,
    () => false,
  );
}
