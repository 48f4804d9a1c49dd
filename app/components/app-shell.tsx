import type { ReactNode } from "react";
import { Form } from "react-router";
import { BrandMark } from "./brand";
import { cx } from "./ui/cx";
import { isActivePath, NavAnchor, useNavAnchorContext } from "./ui/nav-anchor";

export type ShellOrganisation = { slug: string; name: string; role: string };
export type ShellUser = { name: string; email: string };

const NAVIGATION = [
  { to: "devices", label: "Devices", icon: "M4 6h16v5H4zM4 13h16v5H4zM7 8.5h.01M7 15.5h.01" },
  { to: "sites", label: "Sites", icon: "M12 21s-7-6.2-7-11.5A7 7 0 0 1 19 9.5C19 14.8 12 21 12 21zM12 12a2.5 2.5 0 1 0 0-5 2.5 2.5 0 0 0 0 5z" },
  { to: "findings", label: "Findings", icon: "M12 3l9 16H3zM12 10v4M12 17h.01" },
  { to: "changes", label: "Changes", icon: "M7 4v16M7 20l-3-3M7 20l3-3M17 20V4M17 4l-3 3M17 4l3 3" },
  { to: "training", label: "Training", icon: "M3 8l9-4 9 4-9 4zM7 10v5c0 1.5 2.2 3 5 3s5-1.5 5-3v-5" },
  { to: "settings", label: "Settings", icon: "M12 15a3 3 0 1 0 0-6 3 3 0 0 0 0 6zM19 12a7 7 0 0 0-.1-1.2l2-1.6-2-3.4-2.4 1a7 7 0 0 0-2-1.2L14 3h-4l-.5 2.6a7 7 0 0 0-2 1.2l-2.4-1-2 3.4 2 1.6a7 7 0 0 0 0 2.4l-2 1.6 2 3.4 2.4-1a7 7 0 0 0 2 1.2L10 21h4l.5-2.6a7 7 0 0 0 2-1.2l2.4 1 2-3.4-2-1.6c.1-.4.1-.8.1-1.2z" },
] as const;

/** What the search box shows on the page it led to: the fleet table's search or fleet reach's source. */
function shellSearchValue(pathname: string, search: string): string {
  const params = new URLSearchParams(search);
  if (/\/devices\/?$/.test(pathname)) return params.get("q") ?? "";
  if (/\/reach\/?$/.test(pathname) && !pathname.includes("/devices/")) return params.get("from") ?? "";
  return "";
}

function Icon({ path, className }: { path: string; className?: string }) {
  return (
    <svg viewBox="0 0 24 24" className={cx("size-5 shrink-0", className)} fill="none" stroke="currentColor" strokeWidth="1.7" strokeLinecap="round" strokeLinejoin="round" aria-hidden="true">
      <path d={path} />
    </svg>
  );
}

/**
 * The signed-in frame. Wide screens: navigation down the left (icons only below 1280 px),
 * organisation switcher and user menu on top. Below 768 px the same navigation is a row of
 * six under the top bar, so the content keeps the whole width of a phone.
 */
export function AppShell({ organisation, organisations, user, theme, children }: { organisation: ShellOrganisation; organisations: ShellOrganisation[]; user: ShellUser; theme: string; children: ReactNode }) {
  // One navigate function and location for every link of the frame (ui/nav-anchor.tsx says why).
  const anchors = useNavAnchorContext();
  const { pathname, search } = anchors;
  return (
    <div className="grid min-h-screen grid-cols-1 grid-rows-[auto_auto_1fr] md:grid-cols-[auto_minmax(0,1fr)] md:grid-rows-[auto_1fr]">
      <a href="#main" className="sr-only focus:not-sr-only focus:fixed focus:top-2 focus:left-2 focus:z-50 focus:rounded-control focus:bg-surface focus:px-3 focus:py-2">
        Skip to content
      </a>
      <nav
        aria-label="Main"
        className="row-start-2 border-b border-line bg-surface px-2 py-1 md:sticky md:top-0 md:col-start-1 md:row-span-2 md:row-start-1 md:flex md:h-screen md:w-16 md:flex-col md:border-r md:border-b-0 md:px-3 md:py-4 xl:w-56"
      >
        <NavAnchor to={`/o/${organisation.slug}`} context={anchors} className="mb-6 flex items-center gap-2 px-2 text-harbour max-md:hidden">
          <BrandMark className="size-8 shrink-0" />
          <span className="text-lg font-semibold tracking-tight max-xl:hidden">Sallyport</span>
        </NavAnchor>
        <ul className="grid grid-cols-6 gap-1 md:block md:space-y-1">
          {NAVIGATION.map((item) => {
            const to = `/o/${organisation.slug}/${item.to}`;
            const isActive = isActivePath(to, pathname);
            return (
              <li key={item.to}>
                <NavAnchor
                  to={to}
                  context={anchors}
                  current={isActive ? "page" : undefined}
                  title={item.label}
                  className={cx(
                    "flex items-center rounded-control text-sm font-medium max-md:flex-col max-md:gap-0.5 max-md:px-1 max-md:py-1.5 max-md:text-xs md:gap-3 md:px-2.5 md:py-2",
                    isActive ? "bg-harbour-soft text-harbour" : "text-ink-muted hover:bg-surface-sunken hover:text-ink",
                  )}
                >
                  <Icon path={item.icon} />
                  <span className="md:max-xl:sr-only">{item.label}</span>
                </NavAnchor>
              </li>
            );
          })}
        </ul>
      </nav>
      <header className="row-start-1 flex h-14 min-w-0 items-center justify-between gap-2 border-b border-line bg-surface px-3 sm:gap-4 md:col-start-2 md:px-6">
        {/* Keyed by the path so a menu closes once one of its links has been followed. */}
        <details key={`organisations ${pathname}`} className="group relative min-w-0">
          <summary className="flex cursor-pointer list-none items-center gap-2 rounded-control px-2 py-1.5 text-sm font-semibold hover:bg-surface-sunken" aria-label={`Organisation: ${organisation.name}. Switch organisation`}>
            <span className="grid size-6 shrink-0 place-items-center rounded-md bg-brass-soft text-xs font-bold text-brass" aria-hidden="true">
              {organisation.name.slice(0, 1).toUpperCase()}
            </span>
            <span className="truncate">{organisation.name}</span>
            <span className="text-xs font-normal text-ink-faint max-sm:hidden">({organisation.role})</span>
            <Icon path="M6 9l6 6 6-6" className="size-4 text-ink-faint" />
          </summary>
          <div className="absolute left-0 z-30 mt-2 w-72 rounded-card border border-line bg-surface-raised p-2 shadow-overlay">
            <p className="px-2 pb-1 text-xs font-semibold tracking-wide text-ink-faint uppercase">Your organisations</p>
            <ul>
              {organisations.map((candidate) => (
                <li key={candidate.slug}>
                  <NavAnchor
                    to={`/o/${candidate.slug}`}
                    context={anchors}
                    current={candidate.slug === organisation.slug ? "true" : undefined}
                    className="flex items-center justify-between rounded-control px-2 py-2 text-sm hover:bg-surface-sunken aria-[current]:font-semibold"
                  >
                    {candidate.name}
                    <span className="text-xs text-ink-faint">{candidate.role}</span>
                  </NavAnchor>
                </li>
              ))}
            </ul>
          </div>
        </details>
        {/* Names search the fleet table; an address or CIDR block opens fleet reach (routes/organisation/search.ts). */}
        <Form method="get" action={`/o/${organisation.slug}/search`} role="search" className="ml-auto w-44 shrink-0 sm:w-auto sm:max-w-xs sm:min-w-0 sm:flex-1">
          <label className="relative block">
            {/* Short on purpose: label lookups match parts of names, and the placeholder says what it takes (whole at 390 px, where the box is 11rem). */}
            <span className="sr-only">Find in the fleet</span>
            <Icon path="M11 18a7 7 0 1 0 0-14 7 7 0 0 0 0 14zM20 20l-4-4" className="pointer-events-none absolute top-1/2 left-2.5 size-4 -translate-y-1/2 text-ink-faint" />
            <input
              type="search"
              name="q"
              key={pathname}
              defaultValue={shellSearchValue(pathname, search)}
              placeholder="Name or address"
              autoComplete="off"
              spellCheck={false}
              className="h-9 w-full min-w-0 rounded-control border border-line-strong bg-surface pr-2 pl-8 text-sm placeholder:text-ink-faint"
            />
          </label>
        </Form>
        <details key={`account ${pathname}`} className="relative">
          <summary className="flex cursor-pointer list-none items-center gap-2 rounded-control px-2 py-1.5 text-sm hover:bg-surface-sunken" aria-label={`Account menu for ${user.name}`}>
            <span className="grid size-7 place-items-center rounded-full bg-harbour text-xs font-semibold text-on-harbour" aria-hidden="true">
              {user.name
                .split(/\s+/)
                .map((part) => part[0])
                .slice(0, 2)
                .join("")
                .toUpperCase()}
            </span>
            <span className="max-sm:hidden">{user.name}</span>
          </summary>
          <div className="absolute right-0 z-30 mt-2 w-72 rounded-card border border-line bg-surface-raised p-2 shadow-overlay">
            <p className="px-2 py-1 text-sm font-medium">{user.name}</p>
            <p className="px-2 pb-2 text-xs break-all text-ink-muted">{user.email}</p>
            <NavAnchor to={`/o/${organisation.slug}/account`} context={anchors} className="block rounded-control px-2 py-2 text-sm hover:bg-surface-sunken">
              Your account
            </NavAnchor>
            <Form method="post" action="/theme" className="flex items-center gap-1 px-2 py-2" aria-label="Theme">
              <input type="hidden" name="returnTo" value={pathname + search} />
              {["system", "light", "dark"].map((option) => (
                <button
                  key={option}
                  type="submit"
                  name="theme"
                  value={option}
                  aria-pressed={theme === option}
                  className="flex-1 rounded-md border border-line px-2 py-1 text-xs capitalize aria-pressed:border-harbour aria-pressed:bg-harbour-soft aria-pressed:text-harbour"
                >
                  {option}
                </button>
              ))}
            </Form>
            <Form method="post" action="/logout" className="border-t border-line pt-1">
              <button type="submit" className="block w-full rounded-control px-2 py-2 text-left text-sm hover:bg-surface-sunken">
                Sign out
              </button>
            </Form>
          </div>
        </details>
      </header>
      <main id="main" className="row-start-3 mx-auto w-full max-w-6xl min-w-0 px-4 py-6 sm:px-6 sm:py-8 md:col-start-2 md:row-start-2">
        {children}
      </main>
    </div>
  );
}
