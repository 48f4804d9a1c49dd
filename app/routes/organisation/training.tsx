import type { Route } from "./+types/training";
import { requireRole } from "#server/auth/guard.server";
import { ComingSoon } from "#app/components/coming-soon";
import { PageErrorBoundary } from "#app/components/error-panel";

export const meta: Route.MetaFunction = () => [{ title: "Training · Sallyport" }];

// A refusal (a role too low, say) shows inside the organisation's frame.
export const ErrorBoundary = PageErrorBoundary;

export async function loader({ context }: Route.LoaderArgs) {
  requireRole(context);
  return null;
}

export default function Training() {
  return (
    <ComingSoon
      title="Training"
      description="Walkthroughs of the layers for one probe, and drills in which trainees predict the outcome."
      what="Walkthroughs and drills are planned after the analysis pages. Trainers will build scenarios from the organisation's own device models."
    />
  );
}
