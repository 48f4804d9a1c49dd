import { useState } from "react";
import { Form } from "react-router";
import { Button } from "#app/components/ui/button";
import { Card } from "#app/components/ui/card";
import { Dialog } from "#app/components/ui/dialog";

/** A card that deletes a training item after a confirmation: what goes with it, then the dialog. */
export function DeleteCard({ noun, title, intent, before, after }: { noun: string; title: string; intent: string; before: string; after: string }) {
  const [deleting, setDeleting] = useState(false);
  return (
    <Card className="p-5">
      <h2 className="text-sm font-semibold">Delete the {noun}</h2>
      <p className="mt-1 text-sm text-ink-muted">{before}</p>
      <Button variant="ghost-danger" size="sm" className="mt-3" onClick={() => setDeleting(true)}>
        Delete {noun}
      </Button>
      <Dialog
        open={deleting}
        onClose={() => setDeleting(false)}
        title={`Delete “${title}”?`}
        footer={
          <Form method="post" onSubmit={() => setDeleting(false)}>
            <input type="hidden" name="intent" value={intent} />
            <Button type="submit" variant="danger">
              Delete {noun}
            </Button>
          </Form>
        }
      >
        {after}
      </Dialog>
    </Card>
  );
}
