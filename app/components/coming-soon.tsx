import type { ReactNode } from "react";
import { PageHeader } from "./ui/card";
import { EmptyState } from "./ui/empty-state";

/** A page whose feature is not built yet: says so plainly and shows no made-up data. */
export function ComingSoon({ title, description, what }: { title: string; description: string; what: ReactNode }) {
  return (
    <>
      <PageHeader title={title} description={description} />
      <EmptyState
        title="Coming"
        icon={
          <svg viewBox="0 0 24 24" className="size-10" fill="none" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round">
            <path d="M4 20V11a8 8 0 0 1 16 0v9M9 20v-5a3 3 0 0 1 6 0v5M2 20h20" />
          </svg>
        }
      >
        {what}
      </EmptyState>
    </>
  );
}
