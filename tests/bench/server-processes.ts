// What the load and A/B benchmarks share about the server they run: signing a client in, and
// the CPU time its processes have used (from /proc, Linux).
import { readdirSync, readFileSync } from "node:fs";

/** Signs in through the form as a browser does; returns the session cookie. */
export async function signIn(base: string, email: string, password: string, address: string): Promise<string> {
  const response = await fetch(`${base}/login`, { method: "POST", redirect: "manual", headers: { Origin: base, "Content-Type": "application/x-www-form-urlencoded", "X-Forwarded-For": address }, body: new URLSearchParams({ email, password }) });
  const cookie = response.headers.getSetCookie().map((line) => line.split(";")[0]).join("; ");
  if (response.status !== 302 || !cookie) throw new Error(`sign-in of ${email} failed: ${response.status}`);
  return cookie;
}

/**
 * The CPU time (ms) the server's processes have used so far: the launched process and its
 * children (the cluster's web and job processes), from /proc (Linux; 0 elsewhere). On a shared
 * machine latency and throughput follow the neighbours' load, CPU per request much less so.
 */
export function serverCpuMs(rootPid: number): number {
  let entries: string[];
  try {
    entries = readdirSync("/proc").filter((name) => /^\d+$/.test(name));
  } catch {
    return 0;
  }
  const ticksPerMs = 100 / 1000; // USER_HZ is 100 on Linux
  let total = 0;
  for (const name of entries) {
    try {
      // Fields after the parenthesised command name: state ppid … utime (14th) stime (15th).
      const stat = readFileSync(`/proc/${name}/stat`, "utf8");
      const fields = stat.slice(stat.lastIndexOf(")") + 2).split(" ");
      if (Number(name) !== rootPid && Number(fields[1]) !== rootPid) continue;
      total += (Number(fields[11]) + Number(fields[12])) / ticksPerMs;
    } catch {
      // The process ended while we looked.
    }
  }
  return total;
}
