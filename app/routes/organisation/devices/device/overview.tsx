import type { Route } from "./+types/overview";
import { compileModel, findings } from "../../../../../server/engine/index";
import { requireDevice } from "../../../../../server/http/device-access.server";
import { ElementLink } from "~/components/device/element-link";
import { isOutcome, OutcomeChip } from "~/components/outcome";
import { SEVERITY_ORDER, SeverityBadge, SeverityCounts } from "~/components/severity";
import { Card } from "~/components/ui/card";
import { EmptyState } from "~/components/ui/empty-state";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.name ?? "Device"} · Sallyport` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const access = await requireDevice(request, params);
  const list = findings(compileModel(access.effective));
  list.sort((a, b) => SEVERITY_ORDER.indexOf(a.severity) - SEVERITY_ORDER.indexOf(b.severity));
  return {
    name: access.device.name,
    devicePath: `/o/${access.organisation.slug}/devices/${access.device.id}`,
    summary: access.revision.summary,
    settings: access.effective.device,
    revision: { number: access.revision.number, message: access.revision.message, author: access.revision.authorEmail, at: access.revision.createdAt.toISOString() },
    findings: list.map((finding) => ({ ...finding, elements: [...finding.elements] })),
  };
}

export default function DeviceOverview({ loaderData }: Route.ComponentProps) {
  const { summary, settings, revision } = loaderData;
  return (
    <div className="space-y-6">
      <div className="grid gap-4 md:grid-cols-3">
        <Card className="p-5">
          <h2 className="text-xs font-semibold tracking-wide text-ink-muted uppercase">Worst on outside interfaces</h2>
          <div className="mt-3">{isOutcome(summary.worstOutsideOutcome) ? <OutcomeChip outcome={summary.worstOutsideOutcome} /> : <span className="text-sm text-ink-muted">No outside interface</span>}</div>
          <p className="mt-2 text-xs text-ink-muted">The most any source gets at any time of the week.</p>
        </Card>
        <Card className="p-5">
          <h2 className="text-xs font-semibold tracking-wide text-ink-muted uppercase">Findings</h2>
          <div className="mt-3">
            <SeverityCounts counts={summary.findingsBySeverity} />
          </div>
        </Card>
        <Card className="p-5">
          <h2 className="text-xs font-semibold tracking-wide text-ink-muted uppercase">Model</h2>
          <p className="mt-3 text-sm">
            {summary.counts.interfaces} interfaces · {summary.counts.inboundRules} inbound rules · {summary.counts.accounts} accounts
          </p>
          <p className="mt-1 text-xs text-ink-muted">
            Time zone {settings.timezone} · default inbound {settings.defaultInbound} · unlistened ports {settings.unlistenedPort}
          </p>
        </Card>
      </div>
      <p className="text-sm text-ink-muted">
        Revision r{revision.number}: “{revision.message || "no message"}” by {revision.author || "unknown"} on {revision.at.slice(0, 16).replace("T", " ")} UTC.
      </p>
      <section aria-labelledby="findings-heading">
        <h2 id="findings-heading" className="mb-3 text-lg font-semibold">
          Findings
        </h2>
        {loaderData.findings.length === 0 ? (
          <EmptyState title="No findings">The hardening checks found nothing to report on this revision. The simulation models the configuration, not the device: confirm on the device.</EmptyState>
        ) : (
          <ul className="space-y-3">
            {loaderData.findings.map((finding, index) => (
              <li key={`${finding.code}-${index}`}>
                <Card className="p-4">
                  <div className="flex flex-wrap items-center gap-2">
                    <SeverityBadge severity={finding.severity} />
                    <h3 className="font-semibold">{finding.title}</h3>
                    <code className="text-xs text-ink-faint">{finding.code}</code>
                  </div>
                  <p className="mt-2 text-sm text-ink-muted">{finding.detail}</p>
                  <div className="mt-2 flex flex-wrap items-center gap-2 text-sm">
                    {finding.elements.map((element) => (
                      <ElementLink key={element} devicePath={loaderData.devicePath} element={element} />
                    ))}
                    <span className="ml-auto text-xs text-ink-faint">Source: {finding.source}</span>
                  </div>
                </Card>
              </li>
            ))}
          </ul>
        )}
      </section>
    </div>
  );
}
