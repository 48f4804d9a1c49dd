// A proposal's change window as an iCalendar event (RFC 5545), for the approval e-mail: the
// reviewers and the author can put it in their calendars. Built with the `ics` package; times
// are written in UTC ("…Z", RFC 5545 §3.3.5 form #2), so no time-zone definition is needed.
import { createEvent } from "ics";
import type { ChangeWindow } from "./change-window.ts";

export type WindowEvent = {
  /** Stable per proposal, so a later e-mail updates the same event (RFC 5545 §3.8.4.7). */
  uid: string;
  title: string;
  description: string;
  url?: string;
  window: ChangeWindow;
  /** Bumped when the window changes (RFC 5545 §3.8.7.4). */
  sequence: number;
};

/** The .ics text of one event spanning the window. */
export function windowCalendar(event: WindowEvent): string {
  const created = createEvent({
    uid: event.uid,
    title: event.title,
    description: event.description,
    ...(event.url ? { url: event.url } : {}),
    start: event.window.start.getTime(),
    startInputType: "utc",
    startOutputType: "utc",
    end: event.window.end.getTime(),
    endInputType: "utc",
    endOutputType: "utc",
    sequence: event.sequence,
    method: "PUBLISH",
    productId: "sallyport/change-proposals",
    status: "CONFIRMED",
    busyStatus: "BUSY",
  });
  // The input is ours and well-formed; an error here is a bug.
  if (created.error || !created.value) throw created.error ?? new Error("the calendar event was not built");
  return created.value;
}
