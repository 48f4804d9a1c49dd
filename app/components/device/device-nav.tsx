import { useState } from "react";
import { cx } from "#app/components/ui/cx";
import { isActivePath, NavAnchor, useNavAnchorContext } from "#app/components/ui/nav-anchor";
import { DEVICE_SECTIONS, SECTION_TITLES } from "./sections";

type Tab = { to: string; label: string; end?: boolean };
type Group = { id: string; label: string; tabs: Tab[] };

/**
 * The device's pages in three groups: what the model answers (analysis), the model itself,
 * and its record of revisions. Thirteen tabs in one row do not fit beside the main
 * navigation at 1366 px, so each group gets its own labelled row.
 */
export function deviceNavGroups(base: string): Group[] {
  return [
    {
      id: "analysis",
      label: "Analysis",
      tabs: [
        { to: base, label: "Overview", end: true },
        { to: `${base}/analysis`, label: "Trace" },
        { to: `${base}/reach`, label: "Reach" },
        { to: `${base}/exposure`, label: "Exposure map" },
        { to: `${base}/expectations`, label: "Expectations" },
      ],
    },
    {
      id: "record",
      label: "Record",
      tabs: [
        { to: `${base}/history`, label: "History" },
        { to: `${base}/proposals`, label: "Proposals" },
        { to: `${base}/field-checks`, label: "Field checks" },
      ],
    },
    { id: "model", label: "Model", tabs: DEVICE_SECTIONS.map((section) => ({ to: `${base}/model/${section}`, label: SECTION_TITLES[section] })) },
  ];
}

function isCurrent(tab: Tab, pathname: string): boolean {
  return isActivePath(tab.to, pathname, tab.end);
}

/**
 * Wide screens show every group at once; below 768 px the groups fold behind one button that
 * names the current page, so the page's own content comes first on a phone.
 */
export function DeviceNav({ base }: { base: string }) {
  const anchors = useNavAnchorContext();
  const { pathname } = anchors;
  const [open, setOpen] = useState(false);
  const groups = deviceNavGroups(base);
  const currentGroup = groups.find((group) => group.tabs.some((tab) => isCurrent(tab, pathname)));
  const currentTab = currentGroup?.tabs.find((tab) => isCurrent(tab, pathname));
  const tabClasses = (isActive: boolean) =>
    cx(
      "block rounded-control px-2.5 py-1.5 text-sm whitespace-nowrap",
      isActive ? "bg-harbour-soft font-semibold text-harbour shadow-[inset_0_-2px_0_var(--color-harbour)]" : "font-medium text-ink-muted hover:bg-surface-sunken hover:text-ink",
    );
  return (
    <nav aria-label="Device" className="mb-6 rounded-card border border-line bg-surface px-2 py-1.5 shadow-card">
      <button
        type="button"
        className="flex w-full items-center justify-between gap-2 rounded-control px-2 py-1.5 text-left text-sm md:hidden"
        aria-expanded={open}
        aria-controls="device-pages"
        onClick={() => setOpen((value) => !value)}
      >
        <span>
          <span className="text-xs font-semibold tracking-wide text-ink-faint uppercase">{currentGroup?.label ?? "Device"}</span>{" "}
          <span className="font-semibold text-harbour">{currentTab?.label ?? "Pages"}</span>
        </span>
        <span className="text-xs text-ink-muted">
          {open ? "Close" : "All pages"}
          <svg viewBox="0 0 24 24" className={cx("ml-1 inline size-4 transition-transform", open && "rotate-180")} fill="none" stroke="currentColor" strokeWidth="2" aria-hidden="true">
            <path d="M6 9l6 6 6-6" />
          </svg>
        </span>
      </button>
      <div id="device-pages" className={cx("gap-x-6 gap-y-1 md:flex md:flex-wrap", open ? "max-md:mt-1 max-md:border-t max-md:border-line max-md:pt-1" : "max-md:hidden")}>
        {groups.map((group) => (
          <div key={group.id} className={cx("flex items-start gap-2 py-0.5", group.id === "model" && "md:basis-full")}>
            <span
              id={`device-pages-${group.id}`}
              className={cx("w-16 shrink-0 pt-2 text-[0.7rem] font-semibold tracking-wide uppercase", group === currentGroup ? "text-harbour" : "text-ink-faint")}
            >
              {group.label}
            </span>
            <ul aria-labelledby={`device-pages-${group.id}`} className="flex min-w-0 flex-wrap gap-0.5">
              {group.tabs.map((tab) => (
                <li key={tab.to}>
                  <NavAnchor to={tab.to} context={anchors} current={isCurrent(tab, pathname) ? "page" : undefined} className={tabClasses(isCurrent(tab, pathname))} onNavigate={() => setOpen(false)}>
                    {tab.label}
                  </NavAnchor>
                </li>
              ))}
            </ul>
          </div>
        ))}
      </div>
    </nav>
  );
}
