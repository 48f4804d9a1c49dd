import { Badge } from "#app/components/ui/card";
import { Table, Td, Th } from "#app/components/ui/table";
import type { CsvReport as Report } from "#server/services/shared-objects.server";
import { formatNumber } from "#server/engine/format";

/** What became of each CSV row (every refused one, the first saved ones); `pending` while the import still waits for its confirmation. */
export function CsvReport({ report, pending = false }: { report: Report; pending?: boolean }) {
  const good = report.created + report.updated;
  return (
    <Table>
      <caption className="p-2 text-left text-sm font-medium">
        {pending ? `${formatNumber(good)} to save, ${formatNumber(report.refused)} refused` : `${formatNumber(good)} saved, ${formatNumber(report.refused)} refused`}
        {report.unlisted > 0 ? ` (${formatNumber(report.unlisted)} more ${pending ? "to save" : "saved"} not listed)` : ""}
      </caption>
      <thead>
        <tr>
          <Th>Row</Th>
          <Th>Name</Th>
          <Th>Result</Th>
          <Th>Detail</Th>
        </tr>
      </thead>
      <tbody>
        {report.rows.map((row) => (
          <tr key={row.row}>
            <Td className="tabular">{row.row}</Td>
            <Td className="font-mono">{row.name}</Td>
            <Td>
              <Badge tone={row.result === "refused" ? "danger" : "success"}>{pending && row.result !== "refused" ? `to be ${row.result}` : row.result}</Badge>
            </Td>
            <Td className="text-xs">{row.message}</Td>
          </tr>
        ))}
      </tbody>
    </Table>
  );
}
