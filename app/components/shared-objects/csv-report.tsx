import { Badge } from "#app/components/ui/card";
import { Table, Td, Th } from "#app/components/ui/table";
import type { CsvRowReport } from "#server/services/shared-objects.server";

/** What became of each CSV row; `pending` while the import still waits for its confirmation. */
export function CsvReport({ report, pending = false }: { report: readonly CsvRowReport[]; pending?: boolean }) {
  const good = report.filter((row) => row.result !== "refused").length;
  const refused = report.length - good;
  return (
    <Table>
      <caption className="p-2 text-left text-sm font-medium">{pending ? `${good} to save, ${refused} refused` : `${good} saved, ${refused} refused`}</caption>
      <thead>
        <tr>
          <Th>Row</Th>
          <Th>Name</Th>
          <Th>Result</Th>
          <Th>Detail</Th>
        </tr>
      </thead>
      <tbody>
        {report.map((row) => (
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
