// Admission to the web process in fair turns (docs/decisions/024). Node answers many requests at
// once by interleaving them, so without a gate every request waits behind every other one in
// flight: ten users loading a large organisation's 50 ms fleet page made a 3 ms trace answer of
// another organisation wait for all of them. Here at most `concurrency` requests are worked at
// once; the others wait in one queue per flow (an organisation in the URL and one user's
// credentials) and are let in by start-time fair queueing: each flow's next request is tagged
// with where its previous requests' CPU cost leaves it, and the smallest tag goes first. A flow
// that has been idle starts at the current tag, so a cheap request of a quiet organisation goes
// before the queued requests of a busy one; a flow that keeps the process busy lets others pass.
// Decision 021 measured why a flat cap per organisation made things worse: the turns here are
// per user (grouped under the organisation), so an organisation with many active users is not
// squeezed to the share of one with ten. The cost is the process's CPU time, split evenly among
// the requests in flight while it was spent (processor sharing): no request's time is counted
// twice and waiting on PostgreSQL costs nothing. Decision 030: one request at a time by default;
// a wait outside the process (a password hash, the mail server) gives the slot up meanwhile
// (`awayFromTurn`), and a request worked 100 ms lends its slot to one more.
import { AsyncLocalStorage } from "node:async_hooks";
import type { IncomingMessage, ServerResponse } from "node:http";
import { performance } from "node:perf_hooks";

/** A request waiting for its turn. */
type Waiting = { flow: Flow; start: () => void; cancelled: boolean };

type Flow = {
  key: string;
  /** Where the flow's next request starts, in CPU milliseconds of fair service. */
  finishTag: number;
  waiting: Waiting[];
  inFlight: number;
  /** The organisation whose recent cost per request estimates this flow's next one. */
  group: string;
};

/** A request let in: worked now, set aside while it waits on something outside the process, or ended. */
type Running = { flow: Flow; charged: number; estimate: number; cost: number; state: "working" | "aside" | "ended"; since: number };

/** What a request's handler is given with its turn. */
export type Turn = {
  /** Ends the turn (once; later calls do nothing). */
  done: () => void;
  /**
   * Runs `work` — a wait on something that is not this process's CPU: a password hash on the
   * thread pool, a mail server — with the slot given up, and resolves once the request has a
   * turn again (before any request still waiting for its first).
   */
  aside: <T>(work: () => Promise<T>) => Promise<T>;
};

export type AdmissionOptions = {
  /** Requests worked at once (ADMISSION_CONCURRENCY; 1 by default, decision 030). */
  concurrency: number;
  /** The process's CPU time so far, in milliseconds (a parameter so a test can drive it). */
  cpuClock?: () => number;
  /**
   * A request worked this long (ms of wall time since its turn began or it came back from aside)
   * lends its slot: one more request is let in beside it, up to twice `concurrency` at once. So
   * one long request — an import, a page of many queries — does not hold the only slot.
   */
  longAfterMs?: number;
  /** Wall-clock milliseconds and a timer (parameters so a test can drive them). */
  clock?: () => number;
  setTimer?: (callback: () => void, ms: number) => void;
};

/** The default for `longAfterMs`: about ten of the demo's pages, and twice the trace answer's p95 target. */
const LONG_AFTER_MS = 100;

/** Groups whose cost estimate is remembered; beyond this the oldest are forgotten. */
const REMEMBERED_GROUPS = 1_000;
/** The estimate for a group not seen before (ms): about a small page's cost. */
const FIRST_ESTIMATE_MS = 5;
/** How quickly an estimate follows the measured cost (weight of the newest request). */
const ESTIMATE_WEIGHT = 0.2;

export class FairAdmission {
  readonly concurrency: number;
  private readonly cpuClock: () => number;
  private readonly flows = new Map<string, Flow>();
  private readonly estimates = new Map<string, number>();
  private readonly running = new Set<Running>();
  /** The start tag of the request let in last: an idle flow starts here. */
  private virtualTime = 0;
  private lastCpu: number;
  private waitingCount = 0;
  /** Requests set aside that want their slot back, in the order they asked. */
  private readonly returning: Array<() => void> = [];
  private begun = 0;
  private readonly longAfterMs: number;
  private readonly clock: () => number;
  private readonly setTimer: (callback: () => void, ms: number) => void;
  /** When the timer set to let a request in beside a long one fires (Infinity: none set). */
  private timerDue = Infinity;

  constructor(options: AdmissionOptions) {
    if (!Number.isInteger(options.concurrency) || options.concurrency < 1) throw new Error("admission concurrency must be a whole number of at least 1");
    this.concurrency = options.concurrency;
    this.cpuClock = options.cpuClock ?? processCpuMilliseconds;
    this.lastCpu = this.cpuClock();
    this.longAfterMs = options.longAfterMs ?? LONG_AFTER_MS;
    this.clock = options.clock ?? (() => performance.now());
    this.setTimer = options.setTimer ?? ((callback, ms) => setTimeout(callback, ms).unref());
  }

  /** Requests waiting for a turn. */
  get queued(): number {
    return this.waitingCount;
  }

  /** Requests being worked. */
  get active(): number {
    return this.running.size;
  }

  /** The cost estimate (ms of CPU per request) of a group, as now known. */
  estimateOf(group: string): number {
    return this.estimates.get(group) ?? FIRST_ESTIMATE_MS;
  }

  /**
   * Asks for a turn. `start` is called (synchronously when a slot is free) with the turn, whose
   * `done` the caller must call once when the request has ended. The returned function withdraws a request
   * still waiting (its client went away); it does nothing once the request has started.
   */
  admit(group: string, who: string, start: (turn: Turn) => void): () => void {
    const key = `${group}\n${who}`;
    let flow = this.flows.get(key);
    if (!flow) {
      flow = { key, finishTag: this.virtualTime, waiting: [], inFlight: 0, group };
      this.flows.set(key, flow);
    }
    const entry: Waiting = { flow, cancelled: false, start: () => this.begin(entry, start) };
    flow.waiting.push(entry);
    this.waitingCount += 1;
    this.dispatch();
    return () => {
      if (entry.cancelled || !flow.waiting.includes(entry)) return;
      entry.cancelled = true;
      flow.waiting.splice(flow.waiting.indexOf(entry), 1);
      this.waitingCount -= 1;
      this.forgetIfIdle(flow);
    };
  }

  private begin(entry: Waiting, start: (turn: Turn) => void) {
    const flow = entry.flow;
    this.account();
    // The flow's start tag: where its earlier requests left it, or now if it was idle.
    const startTag = Math.max(flow.finishTag, this.virtualTime);
    const estimate = this.estimateOf(flow.group);
    this.virtualTime = startTag;
    if (++this.begun % 256 === 0) for (const idle of [...this.flows.values()]) this.forgetIfIdle(idle);
    flow.finishTag = startTag + estimate;
    flow.inFlight += 1;
    const running: Running = { flow, charged: estimate, estimate, cost: 0, state: "working", since: this.clock() };
    this.running.add(running);
    start({
      done: () => {
        if (running.state === "ended") return;
        this.account();
        running.state = "ended";
        this.running.delete(running);
        flow.inFlight -= 1;
        // Charge what the request really cost instead of its estimate.
        flow.finishTag += running.cost - running.charged;
        this.learn(flow.group, running.cost);
        this.forgetIfIdle(flow);
        this.dispatch();
      },
      aside: (work) => this.aside(running, work),
    });
  }

  private async aside<T>(running: Running, work: () => Promise<T>): Promise<T> {
    if (running.state !== "working") return work();
    this.account();
    running.state = "aside";
    this.running.delete(running);
    this.dispatch();
    try {
      return await work();
    } finally {
      await this.comeBack(running);
    }
  }

  /** A request set aside asks for a slot again; it goes before those waiting for their first. */
  private comeBack(running: Running): Promise<void> {
    // Ended meanwhile (its client went away): nothing to wait for.
    if (running.state !== "aside") return Promise.resolve();
    return new Promise((resolve) => {
      this.returning.push(() => {
        // A request that ended while aside (its client went away) takes no slot.
        if (running.state === "aside") {
          this.account();
          running.state = "working";
          running.since = this.clock();
          this.running.add(running);
        }
        resolve();
      });
      this.dispatch();
    });
  }

  /** Lets waiting requests in while slots are free, smallest start tag first. */
  private dispatch() {
    while (this.running.size < this.capacity() && this.returning.length > 0) (this.returning.shift() as () => void)();
    while (this.running.size < this.capacity() && this.waitingCount > 0) {
      let next: Flow | undefined;
      let nextTag = Infinity;
      for (const flow of this.flows.values()) {
        if (flow.waiting.length === 0) continue;
        const tag = Math.max(flow.finishTag, this.virtualTime);
        if (tag < nextTag) {
          next = flow;
          nextTag = tag;
        }
      }
      if (!next) break;
      const entry = next.waiting.shift() as Waiting;
      this.waitingCount -= 1;
      entry.start();
    }
    this.lookAgainLater();
  }

  /** Slots now: `concurrency`, plus one for each request worked longer than `longAfterMs` (at most twice `concurrency`). */
  private capacity(): number {
    if (this.running.size < this.concurrency) return this.concurrency;
    const now = this.clock();
    let lent = 0;
    for (const running of this.running) if (now - running.since >= this.longAfterMs) lent++;
    return this.concurrency + Math.min(lent, this.concurrency);
  }

  /** With requests still waiting, looks again when the next request in flight turns long. */
  private lookAgainLater() {
    if (this.waitingCount + this.returning.length === 0 || this.running.size >= 2 * this.concurrency) return;
    let due = Infinity;
    const now = this.clock();
    for (const running of this.running) if (now - running.since < this.longAfterMs) due = Math.min(due, running.since + this.longAfterMs);
    if (due === Infinity || due >= this.timerDue) return;
    this.timerDue = due;
    this.setTimer(() => {
      this.timerDue = Infinity;
      this.dispatch();
    }, Math.max(0, due - now));
  }

  /** Splits the CPU time spent since the last look evenly among the requests in flight. */
  private account() {
    const now = this.cpuClock();
    const spent = Math.max(0, now - this.lastCpu);
    this.lastCpu = now;
    if (this.running.size === 0) return;
    const share = spent / this.running.size;
    for (const running of this.running) running.cost += share;
  }

  private learn(group: string, cost: number) {
    const previous = this.estimates.get(group);
    this.estimates.delete(group);
    this.estimates.set(group, previous === undefined ? cost : previous + ESTIMATE_WEIGHT * (cost - previous));
    if (this.estimates.size > REMEMBERED_GROUPS) this.estimates.delete(this.estimates.keys().next().value as string);
  }

  /** A flow with nothing waiting or in flight is forgotten: it would start at the current tag anyway, unless it is still ahead of it. */
  private forgetIfIdle(flow: Flow) {
    if (flow.waiting.length === 0 && flow.inFlight === 0 && flow.finishTag <= this.virtualTime) this.flows.delete(flow.key);
  }
}

/**
 * The main thread's busy time so far (ms): the event loop's time outside its wait for I/O, which
 * is where a request's JavaScript, rendering and compression run. Read from the loop's own
 * counters without a system call: `process.cpuUsage()` (getrusage) showed as ≈ 2 % of the web
 * process's profile on the loaded machine (0.6 µs against 1.8 µs a call when quiet).
 */
function processCpuMilliseconds(): number {
  return performance.eventLoopUtilization().active;
}

/** The end of each response's turn, for the writer that hands its body off before it is flushed. */
const turns = new WeakMap<ServerResponse, () => void>();

/** The turn of the request whose code is running, for `awayFromTurn` deep in a service. */
const currentTurn = new AsyncLocalStorage<Turn>();

/**
 * Runs `work`, a wait on something other than this process's CPU (a password hash on the thread
 * pool, a mail server), with the request's slot given to another while it waits. Outside a
 * request (the CLI, a job, a test) it just runs `work`.
 */
export function awayFromTurn<T>(work: () => Promise<T>): Promise<T> {
  const turn = currentTurn.getStore();
  return turn ? turn.aside(work) : work();
}

/**
 * Wraps a handler so it runs in its turn. The turn ends when the handler hands the body off
 * (`handOff`, called by the writer: server/http/respond.server.ts), or else when the response
 * finishes or its connection closes. A client that reads a large export
 * slowly keeps its connection, not a slot: the CPU work is done and waiting on a reader costs none.
 */
export function takingTurns<Request extends IncomingMessage & { path: string }, Response extends ServerResponse, Next>(
  admission: FairAdmission,
  flowOf: (request: Request) => string,
  handler: (request: Request, response: Response, next: Next) => unknown,
  options: { sayWait?: boolean } = {},
): (request: Request, response: Response, next: Next) => void {
  return (request, response, next) => {
    const asked = options.sayWait ? performance.now() : 0;
    const withdraw = admission.admit(organisationOfPath(request.path), flowOf(request), (turn) => {
      // How long the request waited for its turn (W3C Server Timing), so a load test can tell
      // waiting behind others from being slow itself. Off by default: it tells of others' load.
      if (options.sayWait) response.setHeader("Server-Timing", `turn;dur=${(performance.now() - asked).toFixed(1)}`);
      turns.set(response, turn.done);
      response.once("finish", turn.done);
      response.once("close", turn.done);
      currentTurn.run(turn, () => void handler(request, response, next));
    });
    response.once("close", withdraw);
  };
}

/** The response's body is handed off (written, or streaming at the client's pace): its turn ends now. */
export function handOff(response: ServerResponse): void {
  const done = turns.get(response);
  if (!done) return;
  turns.delete(response);
  done();
}

/** The organisation a request path names (`/o/<slug>/…`), or "" for the pages outside one. */
export function organisationOfPath(path: string): string {
  const match = /^\/o\/([^/?#]+)/.exec(path);
  return match ? match[1].replace(/\.data$/, "") : "";
}
