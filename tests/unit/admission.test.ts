// The web process's fair admission (server/http/admission.server.ts, docs/decisions/024), driven
// by a CPU clock the test moves: who is let in, in which order, and what each flow is charged.
import http from "node:http";
import type { AddressInfo } from "node:net";
import express from "express";
import { describe, expect, it } from "vitest";
import { awayFromTurn, FairAdmission, organisationOfPath, takingTurns, type Turn } from "#server/http/admission.server.ts";
import { sendAnswer } from "#server/http/respond.server.ts";

function harness(concurrency: number) {
  let cpu = 0;
  const admission = new FairAdmission({ concurrency, cpuClock: () => cpu });
  const started: string[] = [];
  const finishers = new Map<string, () => void>();
  const turns = new Map<string, Turn>();
  const ask = (group: string, who: string, name: string) =>
    admission.admit(group, who, (turn) => {
      started.push(name);
      finishers.set(name, turn.done);
      turns.set(name, turn);
    });
  /** Spends `ms` of CPU among the requests in flight, then ends request `name`. */
  const finish = (name: string, ms: number) => {
    cpu += ms;
    const done = finishers.get(name);
    if (!done) throw new Error(`${name} has not started`);
    finishers.delete(name);
    done();
  };
  return { admission, started, ask, finish, turns, spend: (ms: number) => (cpu += ms) };
}

describe("fair admission", () => {
  it("works at most `concurrency` requests at once and lets the next in when one ends", () => {
    const { admission, started, ask, finish } = harness(2);
    ask("a", "u1", "a1");
    ask("a", "u1", "a2");
    ask("a", "u1", "a3");
    expect(started).toEqual(["a1", "a2"]);
    expect(admission.active).toBe(2);
    expect(admission.queued).toBe(1);
    finish("a1", 10);
    expect(started).toEqual(["a1", "a2", "a3"]);
    expect(admission.queued).toBe(0);
  });

  it("lets a quiet organisation's request pass the queued requests of a busy one", () => {
    const { started, ask, finish } = harness(1);
    // The busy organisation's user: one request working, four waiting, each costing 50 ms.
    for (let index = 1; index <= 5; index++) ask("large", "heavy", `large${index}`);
    finish("large1", 50);
    // Another organisation's request arrives behind the four waiting ones…
    ask("demo", "engineer", "demo1");
    finish("large2", 50);
    // …and goes next, not fifth.
    expect(started).toEqual(["large1", "large2", "demo1"]);
  });

  it("serves two busy flows in turn by their CPU cost: equal time each, so more of the cheap requests", () => {
    const { started, ask, finish } = harness(1);
    for (let index = 1; index <= 4; index++) ask("large", "heavy", `L${index}`);
    for (let index = 1; index <= 30; index++) ask("demo", "engineer", `d${index}`);
    const costOf = (name: string) => (name.startsWith("L") ? 40 : 5);
    while (started.length < 34) finish(started[started.length - 1], costOf(started[started.length - 1]));
    // After the first large request (40 ms) the demo flow catches up with 8 requests of 5 ms,
    // then they alternate one 40 ms request against eight 5 ms ones: neither flow starves.
    const demoBetween = (from: string, to: string) => started.slice(started.indexOf(from) + 1, started.indexOf(to)).length;
    expect(started[0]).toBe("L1");
    expect(demoBetween("L1", "L2")).toBe(8);
    expect(demoBetween("L2", "L3")).toBe(8);
    expect(demoBetween("L3", "L4")).toBe(8);
  });

  it("gives each user of an organisation a turn: many users of one organisation are not squeezed to one user's share", () => {
    const { started, ask, finish } = harness(1);
    ask("large", "heavy", "L1");
    ask("large", "heavy", "L2");
    ask("large", "heavy", "L3");
    finish("L1", 30);
    for (let user = 1; user <= 3; user++) ask("demo", `engineer${user}`, `d${user}`);
    while (started.length < 6) finish(started[started.length - 1], started[started.length - 1].startsWith("L") ? 30 : 30);
    // The three demo users each had their turn before the large user's third request.
    expect(started.indexOf("L3")).toBeGreaterThan(started.indexOf("d3"));
  });

  it("forgets a request withdrawn while waiting and never starts it", () => {
    const { admission, started, ask, finish } = harness(1);
    ask("a", "u1", "a1");
    const withdraw = ask("b", "u2", "b1");
    ask("c", "u3", "c1");
    withdraw();
    withdraw();
    expect(admission.queued).toBe(1);
    finish("a1", 1);
    expect(started).toEqual(["a1", "c1"]);
  });

  it("charges the CPU spent while several requests worked evenly among them", () => {
    const { admission, ask, finish } = harness(2);
    ask("a", "u1", "a1");
    ask("b", "u2", "b1");
    // 20 ms while both worked: 10 each.
    finish("a1", 20);
    expect(admission.estimateOf("a")).toBeCloseTo(10);
    // 6 ms more with b alone: b cost 16 in all.
    finish("b1", 6);
    expect(admission.estimateOf("b")).toBeCloseTo(16);
  });

  it("counts a request's end once even when told twice", () => {
    let cpu = 0;
    const admission = new FairAdmission({ concurrency: 1, cpuClock: () => cpu });
    let finishFirst: () => void = () => undefined;
    const started: string[] = [];
    admission.admit("a", "u1", (turn) => {
      started.push("a1");
      finishFirst = turn.done;
    });
    admission.admit("a", "u1", () => started.push("a2"));
    admission.admit("a", "u1", () => started.push("a3"));
    cpu += 1;
    finishFirst();
    finishFirst();
    expect(started).toEqual(["a1", "a2"]);
    expect(admission.active).toBe(1);
  });

  it("gives the slot to another while a request waits aside, and lets it back in before anyone still waiting for a first turn", async () => {
    const { admission, started, ask, finish, turns } = harness(1);
    ask("a", "u1", "a1");
    ask("b", "u2", "b1");
    ask("b", "u3", "b2");
    expect(started).toEqual(["a1"]);
    let release: (value: string) => void = () => undefined;
    const away = (turns.get("a1") as Turn).aside(() => new Promise<string>((resolve) => (release = resolve)));
    // While a1 waits on, say, a mail server, b1 is worked.
    expect(started).toEqual(["a1", "b1"]);
    expect(admission.active).toBe(1);
    release("sent");
    await Promise.resolve();
    // a1's wait is over, but the slot is b1's until b1 ends; then a1 goes before b2.
    finish("b1", 3);
    await expect(away).resolves.toBe("sent");
    expect(started).toEqual(["a1", "b1"]);
    expect(admission.active).toBe(1);
    expect(admission.queued).toBe(1);
    finish("a1", 2);
    expect(started).toEqual(["a1", "b1", "b2"]);
  });

  it("charges a request nothing for the time it waited aside, and takes no slot back for a request that ended meanwhile", async () => {
    const { admission, started, ask, finish, turns, spend } = harness(1);
    ask("a", "u1", "a1");
    let release: () => void = () => undefined;
    const away = (turns.get("a1") as Turn).aside(() => new Promise<void>((resolve) => (release = resolve)));
    ask("b", "u2", "b1");
    expect(started).toEqual(["a1", "b1"]);
    spend(40);
    // a1's client went away while it waited: its turn ends; its wait then resolves without a slot.
    (turns.get("a1") as Turn).done();
    finish("b1", 0);
    expect(admission.estimateOf("a")).toBe(0);
    expect(admission.estimateOf("b")).toBe(40);
    release();
    await away;
    expect(admission.active).toBe(0);
    ask("c", "u3", "c1");
    expect(started).toEqual(["a1", "b1", "c1"]);
  });

  it("lets one more request in beside a request worked longer than longAfterMs, up to twice the concurrency", () => {
    let now = 0;
    const timers: Array<{ due: number; callback: () => void }> = [];
    const admission = new FairAdmission({ concurrency: 1, cpuClock: () => 0, longAfterMs: 100, clock: () => now, setTimer: (callback, ms) => timers.push({ due: now + ms, callback }) });
    const started: string[] = [];
    const dones = new Map<string, () => void>();
    const ask = (group: string, name: string) => admission.admit(group, name, (turn) => (started.push(name), dones.set(name, turn.done)));
    const advance = (ms: number) => {
      now += ms;
      for (const timer of timers.splice(0).filter((t) => t.due <= now || (timers.push(t), false))) timer.callback();
    };
    ask("large", "import");
    ask("demo", "trace");
    ask("demo", "fleet");
    expect(started).toEqual(["import"]);
    advance(99);
    expect(started).toEqual(["import"]);
    // The import has been worked 100 ms: the trace answer is let in beside it.
    advance(1);
    expect(started).toEqual(["import", "trace"]);
    // Both long now, but no more than twice the concurrency at once.
    advance(500);
    expect(started).toEqual(["import", "trace"]);
    expect(admission.active).toBe(2);
    // When the trace ends, the import (still being worked, long) lends its slot again: the fleet page comes in.
    (dones.get("trace") as () => void)();
    expect(started).toEqual(["import", "trace", "fleet"]);
  });

  it("counts a request's time from when it came back from aside, and lends nothing while the slots are not all taken", async () => {
    let now = 0;
    const timers: Array<{ due: number; callback: () => void }> = [];
    const admission = new FairAdmission({ concurrency: 2, cpuClock: () => 0, longAfterMs: 100, clock: () => now, setTimer: (callback, ms) => timers.push({ due: now + ms, callback }) });
    const started: string[] = [];
    const turns = new Map<string, Turn>();
    const ask = (name: string) => admission.admit(name, name, (turn) => (started.push(name), turns.set(name, turn)));
    ask("a");
    now = 500;
    // a is long, but a slot is still free: b takes it, nothing is lent beyond two.
    ask("b");
    expect(started).toEqual(["a", "b"]);
    let release: () => void = () => undefined;
    const away = (turns.get("b") as Turn).aside(() => new Promise<void>((resolve) => (release = resolve)));
    ask("c");
    expect(started).toEqual(["a", "b", "c"]);
    release();
    await Promise.resolve();
    // b wants its slot back: a (long) lends one, c is not long, so b comes back at once.
    await away;
    expect(admission.active).toBe(3);
    ask("d");
    // a is long and lends its one slot (now b's); b came back at 500, c began at 500: d waits.
    expect(started).toEqual(["a", "b", "c"]);
    now = 600;
    for (const timer of timers.splice(0)) if (timer.due <= now) timer.callback();
    // b and c have now been worked 100 ms: the slots may be twice the concurrency, d comes in.
    expect(started).toEqual(["a", "b", "c", "d"]);
  });

  it("runs work away from a turn as it is outside a request (the CLI, a job)", async () => {
    await expect(awayFromTurn(async () => 7)).resolves.toBe(7);
  });

  it("refuses a concurrency below one", () => {
    expect(() => new FairAdmission({ concurrency: 0 })).toThrow(/at least 1/);
  });

  it("reads the organisation from the path, with or without the data suffix", () => {
    expect(organisationOfPath("/o/lanternfield/devices")).toBe("lanternfield");
    expect(organisationOfPath("/o/lanternfield.data")).toBe("lanternfield");
    expect(organisationOfPath("/o/lanternfield/devices.data")).toBe("lanternfield");
    expect(organisationOfPath("/login")).toBe("");
    expect(organisationOfPath("/api/v1/devices")).toBe("");
  });

  it("says how long a request waited for its turn only when asked to (Server-Timing)", async () => {
    // A slot held 300 ms, not lent meanwhile (that is the next tests' subject).
    const admission = new FairAdmission({ concurrency: 1, longAfterMs: 60_000 });
    let release: () => void = () => undefined;
    const held = new Promise<void>((resolve) => (release = resolve));
    const handler = async (request: express.Request, response: express.Response) => {
      if (request.path.endsWith("/slow")) await held;
      await sendAnswer(response, Response.json({ ok: true }));
    };
    const app = express();
    app.get("/quiet/*rest", takingTurns(admission, (request: express.Request) => request.get("cookie") ?? "", handler));
    app.get(/.*/, takingTurns(admission, (request: express.Request) => request.get("cookie") ?? "", handler, { sayWait: true }));
    const server = app.listen(0, "127.0.0.1");
    await new Promise((resolve) => server.once("listening", resolve));
    const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
    try {
      expect((await fetch(`${base}/quiet/o/demo`)).headers.get("server-timing")).toBeNull();
      // The one slot is held for 300 ms; the next request waits that long for its turn.
      const slow = fetch(`${base}/o/large/slow`, { headers: { Cookie: "a" } });
      await expect.poll(() => admission.active).toBe(1);
      setTimeout(release, 300);
      const waited = await fetch(`${base}/o/demo/fast`, { headers: { Cookie: "b" } });
      const wait = Number(/^turn;dur=([\d.]+)$/.exec(waited.headers.get("server-timing") ?? "")?.[1]);
      expect(wait).toBeGreaterThanOrEqual(250);
      expect(Number(/dur=([\d.]+)/.exec((await slow).headers.get("server-timing") ?? "")?.[1])).toBeLessThan(250);
    } finally {
      await new Promise((resolve) => server.close(resolve));
    }
  });

  it("lets another request through the one slot while a handler waits away from its turn (a slow mail server, say)", async () => {
    const admission = new FairAdmission({ concurrency: 1 });
    let release: () => void = () => undefined;
    const mailServer = new Promise<void>((resolve) => (release = resolve));
    let mailing = false;
    const app = express();
    app.get(
      /.*/,
      takingTurns(admission, (request: express.Request) => request.get("cookie") ?? "", async (request: express.Request, response: express.Response) => {
        if (request.path.endsWith("/forgot-password")) {
          mailing = true;
          await awayFromTurn(() => mailServer);
        }
        await sendAnswer(response, Response.json({ path: request.path }));
      }),
    );
    const server = app.listen(0, "127.0.0.1");
    await new Promise((resolve) => server.once("listening", resolve));
    const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
    try {
      const asked = fetch(`${base}/forgot-password`, { headers: { Cookie: "a" } });
      await expect.poll(() => mailing, { timeout: 5_000 }).toBe(true);
      expect(admission.active).toBe(0);
      // The mail is not sent yet, and another organisation's answer comes through the one slot.
      expect(await (await fetch(`${base}/o/demo/devices/d2/api/trace`, { headers: { Cookie: "b" } })).json()).toEqual({ path: "/o/demo/devices/d2/api/trace" });
      release();
      expect(await (await asked).json()).toEqual({ path: "/forgot-password" });
    } finally {
      await new Promise((resolve) => server.close(resolve));
    }
  });

  it("ends a turn when the body is handed off: a client reading a large export slowly does not hold the slot", async () => {
    // One slot, as the web process's writer (server/http/respond.server.ts) uses it over HTTP.
    const admission = new FairAdmission({ concurrency: 1 });
    const exportBytes = 48 * 1024 * 1024;
    let exportFinished = false;
    const app = express();
    app.get(
      /.*/,
      takingTurns(admission, (request: express.Request) => request.get("cookie") ?? "", async (request: express.Request, response: express.Response) => {
        if (request.path.endsWith("/export")) {
          response.once("finish", () => (exportFinished = true));
          await sendAnswer(response, new Response("x".repeat(exportBytes), { headers: { "Content-Type": "application/json" } }));
        } else {
          await sendAnswer(response, Response.json({ ok: true }));
        }
      }),
    );
    const server = app.listen(0, "127.0.0.1");
    await new Promise((resolve) => server.once("listening", resolve));
    const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
    const agent = new http.Agent({ keepAlive: false });
    try {
      // The slow reader: takes the answer's head, then reads nothing.
      const slow = await new Promise<http.IncomingMessage>((resolve, reject) => {
        http.get(`${base}/o/large/devices/d1/export`, { agent, headers: { Cookie: "slow" } }, (response) => {
          response.pause();
          resolve(response);
        }).on("error", reject);
      });
      await expect.poll(() => admission.active, { timeout: 5_000 }).toBe(0);
      expect(exportFinished).toBe(false);
      // Another organisation's request is answered meanwhile through the one slot.
      const other = await fetch(`${base}/o/demo/devices/d2/api/trace`, { headers: { Cookie: "other" } });
      expect(await other.json()).toEqual({ ok: true });
      expect(exportFinished).toBe(false);
      // The slow reader still gets the whole export.
      let received = 0;
      slow.on("data", (chunk: Buffer) => (received += chunk.length));
      slow.resume();
      await new Promise((resolve) => slow.once("end", resolve));
      expect(received).toBe(exportBytes);
      expect(exportFinished).toBe(true);
    } finally {
      agent.destroy();
      await new Promise((resolve) => server.close(resolve));
    }
  });
});
