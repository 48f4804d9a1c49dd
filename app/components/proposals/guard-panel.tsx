import { Form } from "react-router";
import { TextAreaField } from "../device/editor-kit";
import { Button } from "../ui/button";
import { Card } from "../ui/card";
import { GateReasons, type ShownReason } from "./proposal-bits";

/** Form values a refused save carried, except the ones this panel sets itself. */
function carried(values: Record<string, string>): Array<[string, string]> {
  return Object.entries(values).filter(([key]) => key !== "overrideReason");
}

/**
 * A direct save the change policy or the lockout guard refused: why, and the two ways on —
 * make the change a proposal (its first draft edit), or, for an admin, save it anyway with a
 * written reason (break-glass when changes go through proposals).
 */
export function GuardPanel({
  message,
  reasons,
  values,
  overrideError,
  canOverride,
  breakGlass,
  proposePath,
  minimum,
}: {
  message: string;
  reasons: readonly ShownReason[];
  values: Record<string, string>;
  overrideError?: string;
  canOverride: boolean;
  breakGlass: boolean;
  proposePath: string | null;
  minimum: number;
}) {
  return (
    <Card className="mb-6 border-danger/50 p-5" role="alert">
      <h2 className="font-semibold text-danger">Not saved</h2>
      <p className="mt-1 text-sm">{message}</p>
      {reasons.length > 0 ? (
        <div className="mt-3">
          <GateReasons reasons={reasons} />
        </div>
      ) : null}
      <div className="mt-4 flex flex-wrap items-start gap-6">
        {proposePath ? (
          <Form method="post" action={proposePath}>
            <input type="hidden" name="intent" value="carry-edit" />
            {carried(values)
              .filter(([key]) => key !== "baseRevision")
              .map(([key, value]) => (
                <input key={key} type="hidden" name={`edit.${key}`} value={value} />
              ))}
            <Button type="submit" variant="secondary">
              Make it a proposal
            </Button>
          </Form>
        ) : null}
        {canOverride ? (
          <Form method="post" className="min-w-64 flex-1 space-y-3" aria-label={breakGlass ? "Break-glass save" : "Save anyway"}>
            {carried(values).map(([key, value]) => (
              <input key={key} type="hidden" name={key} value={value} />
            ))}
            <TextAreaField
              label={breakGlass ? "Why this cannot wait for a proposal (break-glass)" : "Why save it anyway"}
              name="overrideReason"
              rows={2}
              defaultValue={values.overrideReason}
              error={overrideError}
              hint={`At least ${minimum} characters; recorded in the audit log${breakGlass ? ", and the reviewers are e-mailed" : ""}.`}
            />
            <Button type="submit" variant="danger">
              {breakGlass ? "Save directly (break-glass)" : "Save anyway"}
            </Button>
          </Form>
        ) : null}
      </div>
    </Card>
  );
}
