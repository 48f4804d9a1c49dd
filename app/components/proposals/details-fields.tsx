import { TextAreaField } from "../device/editor-kit";
import { TextField } from "../ui/field";

export type DetailsValues = { title?: string; reason?: string; ticket?: string; windowStart?: string; windowEnd?: string; workFrom?: string };

/** A proposal's title, reason, ticket, change window (wall-clock times in the device's zone) and where the author works from. */
export function ProposalDetailsFields({ values, errors, timezone }: { values: DetailsValues; errors: Record<string, string>; timezone: string }) {
  return (
    <div className="space-y-4">
      <TextField label="Title" name="title" required maxLength={200} defaultValue={values.title} error={errors.title} hint="What the change does, in a line; applied, it becomes the revision's message." />
      <TextAreaField label="Reason" name="reason" rows={3} defaultValue={values.reason} error={errors.reason} hint="Why the change is needed, for the reviewers and the change record." />
      <TextField label="Ticket reference (optional)" name="ticket" maxLength={100} defaultValue={values.ticket} error={errors.ticket} />
      <fieldset className="space-y-2">
        <legend className="text-sm font-medium">Change window, in the device's time zone ({timezone})</legend>
        <div className="grid gap-3 sm:grid-cols-2">
          <TextField label="Starts" name="windowStart" type="datetime-local" required defaultValue={values.windowStart} error={errors.windowStart} />
          <TextField label="Ends" name="windowEnd" type="datetime-local" required defaultValue={values.windowEnd} error={errors.windowEnd} />
        </div>
        <p className="text-xs text-ink-muted">The change can be applied only inside this window (an admin may apply it outside, with a reason).</p>
      </fieldset>
      <TextField
        label="Where you work from (optional)"
        name="workFrom"
        maxLength={64}
        defaultValue={values.workFrom}
        error={errors.workFrom}
        hint="Your own address, e.g. 10.20.30.41: the lockout guard blocks the change if that address would lose every login it has."
      />
    </div>
  );
}
