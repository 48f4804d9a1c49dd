import type { MouseEvent, ReactNode } from "react";
import { useLocation, useNavigate } from "react-router";

// The frame's navigation (the main bar, the device's tabs) and the fleet table's rows are drawn on every page. React
// Router's Link and NavLink each resolve their path, read the router's contexts and build a
// click handler per link on the server: for the twenty-odd links of a device page that was
// about a twentieth of the page's CPU (docs/decisions/026). These anchors take absolute paths
// and one navigate function and current location from their bar, and behave as a Link does:
// an ordinary click moves within the app, a modified or middle click is the browser's.

/** What a navigation bar hands its anchors: one navigate function and where we are. */
export type NavAnchorContext = { navigate: ReturnType<typeof useNavigate>; here: string; pathname: string; search: string };

/** Read once per bar, not per link. */
export function useNavAnchorContext(): NavAnchorContext {
  const navigate = useNavigate();
  const location = useLocation();
  return { navigate, here: `${location.pathname}${location.search}${location.hash}`, pathname: location.pathname, search: location.search };
}

/** Whether `to` is the current page or one below it (NavLink's rule; `end`: only the page itself). */
export function isActivePath(to: string, pathname: string, end = false): boolean {
  if (pathname === to || pathname === `${to}/`) return true;
  return !end && pathname.startsWith(`${to}/`);
}

/** A click the app handles itself: the main button, no modifier key, no other target (as React Router's Link decides). */
function followsInApp(event: MouseEvent<HTMLAnchorElement>): boolean {
  const target = event.currentTarget.getAttribute("target");
  return event.button === 0 && !event.defaultPrevented && !(event.metaKey || event.altKey || event.ctrlKey || event.shiftKey) && (!target || target === "_self");
}

/**
 * An anchor to an absolute path of the app. `current`: its aria-current ("page" for the page
 * shown, as NavLink marks it). `data-discover` lets the framework fetch the
 * route's code ahead, as it does for its own links.
 */
export function NavAnchor({ to, context, current, className, title, label, onNavigate, children }: { to: string; context: NavAnchorContext; current?: "page" | "true"; className?: string; title?: string; label?: string; onNavigate?: () => void; children: ReactNode }) {
  return (
    <a
      href={to}
      className={className}
      title={title}
      aria-label={label}
      aria-current={current}
      data-discover="true"
      onClick={(event) => {
        if (!followsInApp(event)) return;
        event.preventDefault();
        onNavigate?.();
        // The page in view asked again replaces its history entry, as a Link does.
        void context.navigate(to, { replace: to === context.here });
      }}
    >
      {children}
    </a>
  );
}
