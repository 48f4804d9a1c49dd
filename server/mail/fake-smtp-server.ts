// `tsx server/mail/fake-smtp-server.ts --port 2525 --dir .data/outbox` — started by the set-up scripts.
import { parseArgs } from "node:util";
import { startFakeSmtp } from "./fake-smtp.ts";

const { values } = parseArgs({ options: { port: { type: "string", default: "2525" }, dir: { type: "string" } } });
if (!values.dir) {
  console.error("usage: fake-smtp-server.ts --port PORT --dir FOLDER");
  process.exit(2);
}
const smtp = await startFakeSmtp({ port: Number(values.port), directory: values.dir });
console.log(`fake SMTP listening on 127.0.0.1:${smtp.port}, writing to ${values.dir}`);
for (const signal of ["SIGINT", "SIGTERM"] as const) {
  process.on(signal, () => void smtp.close().then(() => process.exit(0)));
}
