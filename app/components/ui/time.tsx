import { formatClock, formatInstant, formatRelative } from "#server/engine/format";

/**
 * An instant in words, in the device's zone with UTC beside it ("Wed 2 Dec 2026, 10:00
 * Europe/Berlin (09:00 UTC)"). Given `now` (from the loader, so server and browser agree) it
 * reads relative ("5 minutes ago"); with `clock` it is the wall clock alone, for a column
 * whose heading names the zone. Either way the full instant is on hover.
 */
export function Time({ at, timeZone = "UTC", now, clock = false, className }: { at: string; timeZone?: string; now?: string; clock?: boolean; className?: string }) {
  const full = formatInstant(at, timeZone);
  const text = now ? formatRelative(at, now) : clock ? formatClock(at, timeZone) : full;
  return (
    <time dateTime={at} title={text === full ? undefined : full} className={className}>
      {text}
    </time>
  );
}
