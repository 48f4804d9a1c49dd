// Helpers behind the reach and exposure map pages: readable counts (app/utils/analysis.ts),
// the address-space drill-down from CIDR lists (server/analysis/address-grids.ts), the week ×
// hour grid and what changes over the week, paging, and CSV reading and writing
// (server/formats/csv.ts). tests/unit/exposure-pictures.test.ts relates the pictures to trace.

import { describe, expect, test } from "vitest";
import { addressCount, cidrBlock, parseViewBlock, rootBlock, segmentsOf, topRank, trailTo, zoomView, type ZoomView } from "#server/analysis/address-grids";
import { pageOf } from "#server/analysis/paging";
import { weekChanges, weekHourGrid } from "#server/analysis/week-hours";
import { answerReach } from "#server/analysis/reach.server";
import { AddressSyntaxError, FAMILY, parseEntry, rangeToCidrs } from "#server/engine/addresses";
import { compileModel, parseModel } from "#server/engine/index";
import { csvField, CsvSyntaxError, parseCsv, toCsv } from "#server/formats/csv";

const RFC1918 = ["10.0.0.0/8", "172.16.0.0/12", "192.168.0.0/16"];
const RFC5737 = ["192.0.2.0/24", "198.51.100.0/24", "203.0.113.0/24"];

/** The cell of a view that holds an address. */
function cellAt(view: ZoomView, address: string) {
  const point = cidrBlock(address)!.first;
  const cell = view.cells.find((candidate) => {
    const block = cidrBlock(candidate.cidr)!;
    return block.first <= point && point <= block.last;
  });
  if (!cell) throw new Error(`${address} is not in ${view.block}`);
  return cell;
}
/** A full partition: the given CIDR lists per rank (1 and up), and silent (rank 0) everywhere else. */
function silentElsewhere(family: 4 | 6, byRank: string[][]): string[][] {
  const taken = byRank.flat().map((text) => cidrBlock(text)!).sort((a, b) => (a.first < b.first ? -1 : 1));
  const silent: string[] = [];
  let next = 0n;
  for (const block of taken) {
    if (block.first > next) silent.push(...rangeToCidrs(family, next, block.first - 1n));
    next = block.last + 1n;
  }
  if (next <= FAMILY[family].max) silent.push(...rangeToCidrs(family, next, FAMILY[family].max));
  expect(addressCount([...silent, ...byRank.flat()])).toBe(FAMILY[family].size); // the partition covers the family (RFC 4632 §3.1)
  return [silent, ...byRank.slice(1)];
}
/** Cells per top rank (index = rank), uniform and mixed together. */
const perTop = (view: ZoomView) => view.cells.reduce((counts, cell) => (counts[cell.top] += 1, counts), [0, 0, 0, 0, 0, 0]);

describe("CIDR parsing and sizes", () => {
  test("Blocks have the sizes of RFC 4632 §3.1 and the published special blocks", () => {
    expect(addressCount(["10.0.0.0/8"])).toBe(16_777_216n); // RFC 1918 §3
    expect(addressCount(["172.16.0.0/12"])).toBe(1_048_576n); // RFC 1918 §3
    expect(addressCount(["192.168.0.0/16"])).toBe(65_536n); // RFC 1918 §3
    expect(addressCount(RFC1918)).toBe(17_891_328n); // RFC 1918 (sum)
    expect(addressCount(RFC5737)).toBe(768n); // RFC 5737: 256 each
    expect(addressCount(["0.0.0.0/0"])).toBe(2n ** 32n); // RFC 4632 §3.1
    expect(addressCount(["2001:db8::/32"])).toBe(2n ** 96n); // RFC 3849
    expect(addressCount(["fe80::/10"])).toBe(2n ** 118n); // RFC 4291 §2.5.6
    expect(addressCount(["::1/128", "::/128"])).toBe(2n); // RFC 4291 §2.5.3 / §2.5.2
  });

  test("Boundaries just outside a block are outside it", () => {
    const block = cidrBlock("172.16.0.0/12")!;
    expect(cidrBlock("172.15.255.255")!.first < block.first).toBe(true); // CHECK-VALUES: just below RFC 1918's /12
    expect(cidrBlock("172.32.0.0")!.first > block.last).toBe(true);
    const ula = cidrBlock("fc00::/7")!;
    expect(cidrBlock("fbff:ffff:ffff:ffff:ffff:ffff:ffff:ffff")!.first < ula.first).toBe(true); // RFC 4193 boundary
    expect(cidrBlock("fe00::")!.first > ula.last).toBe(true);
  });

  test("Malformed text is refused, not guessed", () => {
    for (const bad of ["10.0.0", "10.0.0.0/33", "256.0.0.0/8", "2001:db8::1::1", "2001:db8:/32", "10.0.0.0/8/1", "fc00::/129"]) expect(cidrBlock(bad), bad).toBeNull();
    expect(cidrBlock("::ffff:192.0.2.1")!.first).toBe((0xffffn << 32n) | 0xc0000201n); // RFC 5952 §5 form
  });

  // Leading zeros: common practice, no source (some readers take "010" as octal 8, others as
  // decimal 10, so the engine refuses them); the pages must accept exactly what the engine does.
  test("Leading zeros in an octet or a prefix length are refused by the pages as by the engine", () => {
    for (const bad of ["010.0.0.1", "192.0.2.0/024"]) {
      expect(() => parseEntry(bad), bad).toThrow(AddressSyntaxError);
      expect(cidrBlock(bad), bad).toBeNull();
      expect(addressCount([bad]), bad).toBe(0n);
      expect(segmentsOf(4, [[bad]]), bad).toEqual([]);
      expect(parseViewBlock(4, bad).ok, bad).toBe(false);
    }
    // The reach page's source address goes through the engine too.
    const parsed = parseModel({ schemaVersion: 2, device: { name: "edge" }, interfaces: [{ name: "outside", addresses: ["192.0.2.1/24"] }] });
    if (!parsed.ok) throw new Error(JSON.stringify(parsed.errors));
    const answer = answerReach(compileModel(parsed.model), { from: "010.0.0.1", at: "" });
    expect(answer.ok).toBe(false);
    expect(!answer.ok && answer.errors.from).toContain('"010.0.0.1"');
    // What the engine accepts, the pages read as the same block.
    for (const good of ["10.0.0.1", "192.0.2.0/24", "2001:db8::/32"]) expect(cidrBlock(good)).toEqual(parseEntry(good).range);
  });
});

// The RFC 1918 partition the tests below draw: private space answers with a login, the rest is silent.
const SILENT_OUTSIDE_RFC1918 = ["0.0.0.0/5", "8.0.0.0/7", "11.0.0.0/8", "12.0.0.0/6", "16.0.0.0/4", "32.0.0.0/3", "64.0.0.0/2", "128.0.0.0/3", "160.0.0.0/5", "168.0.0.0/6", "172.0.0.0/12", "172.32.0.0/11", "172.64.0.0/10", "172.128.0.0/9", "173.0.0.0/8", "174.0.0.0/7", "176.0.0.0/4", "192.0.0.0/9", "192.128.0.0/11", "192.160.0.0/13", "192.169.0.0/16", "192.170.0.0/15", "192.172.0.0/14", "192.176.0.0/12", "192.192.0.0/10", "193.0.0.0/8", "194.0.0.0/7", "196.0.0.0/6", "200.0.0.0/5", "208.0.0.0/4", "224.0.0.0/3"];

describe("The address-space drill-down", () => {
  test("The whole IPv4 space is 256 cells of /8 (RFC 4632 §3.1: 2^32 / 2^24), and their counts add up to it", () => {
    const view = zoomView(4, segmentsOf(4, [["0.0.0.0/0"]]), rootBlock(4));
    expect(view.cells).toHaveLength(256);
    expect(view.columns).toBe(16);
    expect(view.cellPrefix).toBe(8);
    expect(view.cells[10].cidr).toBe("10.0.0.0/8");
    expect(view.counts[0]).toBe((2n ** 32n).toString());
    expect(view.cells.every((cell) => cell.uniform && cell.top === 0 && cell.counts[0] === (2n ** 24n).toString() && cell.zoom === null)).toBe(true);
    expect(view.trail).toEqual([]);
  });

  test("RFC 1918 space: 10/8 is one uniform cell; 172/8 and 192/8 are mixed, and zooming in shows 16 and 1 uniform /16s", () => {
    // The test input itself is a partition: its sizes add up to the whole space.
    expect(addressCount(SILENT_OUTSIDE_RFC1918) + addressCount(RFC1918)).toBe(2n ** 32n); // RFC 4632 §3.1
    const segments = segmentsOf(4, [SILENT_OUTSIDE_RFC1918, [], [], [], [], RFC1918]);
    const root = zoomView(4, segments, rootBlock(4));
    expect(cellAt(root, "10.0.0.0")).toMatchObject({ uniform: true, top: 5, zoom: null, special: "Private, RFC 1918", marked: true }); // RFC 1918 §3
    const cell172 = cellAt(root, "172.16.0.0");
    expect(cell172).toMatchObject({ uniform: false, top: 5 });
    expect(cell172.counts[5]).toBe("1048576"); // RFC 1918 §3: 172.16.0.0/12 holds 2^20
    expect(cellAt(root, "192.168.0.0").counts[5]).toBe("65536"); // RFC 1918 §3: 192.168.0.0/16 holds 2^16
    expect(root.cells.filter((cell) => !cell.uniform).map((cell) => cell.cidr)).toEqual(["172.0.0.0/8", "192.0.0.0/8"]);
    // The changes in 172/8 are more than one octet apart, so its zoom is the cell itself.
    expect(cell172.zoom).toBe("172.0.0.0/8");
    const zoomed = zoomView(4, segments, cell172.zoom!);
    expect(zoomed.trail).toEqual(["0.0.0.0/0"]);
    expect(perTop(zoomed)[5]).toBe(16); // 172.16.0.0/12 = 16 cells of /16
    expect(cellAt(zoomed, "172.15.255.255")).toMatchObject({ uniform: true, top: 0 }); // CHECK-VALUES: just below RFC 1918's /12
    expect(cellAt(zoomed, "172.31.0.0")).toMatchObject({ uniform: true, top: 5 });
    expect(cellAt(zoomed, "172.32.0.0")).toMatchObject({ uniform: true, top: 0 });
    expect(zoomed.counts[5]).toBe("1048576");
    expect(perTop(zoomView(4, segments, "192.0.0.0/8"))[5]).toBe(1);
  });

  test("A block smaller than a cell makes its cell mixed, coloured by the most exposed outcome in it", () => {
    // RFC 5737 documentation /24s answer ping (rank 2); the rest is silent.
    const root = zoomView(4, segmentsOf(4, silentElsewhere(4, [[], [], RFC5737])), rootBlock(4));
    expect(root.cells.filter((cell) => !cell.uniform).map((cell) => cell.cidr)).toEqual(["192.0.0.0/8", "198.0.0.0/8", "203.0.0.0/8"]);
    expect(cellAt(root, "198.51.100.1")).toMatchObject({ top: 2, counts: [(2n ** 24n - 256n).toString(), "0", "256", "0", "0", "0"] }); // RFC 5737: 256 per /24
    expect(cellAt(root, "8.8.8.8")).toMatchObject({ top: 0, uniform: true });
  });

  test("Zoom targets skip levels to where the changes are: 192.0.2.0/24 inside silent space is reached from 192/8 at 192.0.0.0/16", () => {
    // Silent everywhere but 192.0.2.0/24 (RFC 5737), which answers (rank 2).
    const segments = segmentsOf(4, silentElsewhere(4, [[], [], ["192.0.2.0/24"]]));
    const root = zoomView(4, segments, rootBlock(4));
    expect(root.counts[2]).toBe("256"); // RFC 5737: one /24
    const cell = cellAt(root, "192.0.2.0");
    expect(cell).toMatchObject({ uniform: false, top: 2, zoom: "192.0.0.0/16" });
    const view = zoomView(4, segments, "192.0.0.0/16");
    expect(view.trail).toEqual(["0.0.0.0/0"]);
    expect(cellAt(view, "192.0.2.0")).toMatchObject({ cidr: "192.0.2.0/24", uniform: true, top: 2, special: "Documentation, RFC 5737" });
    expect(view.cells.filter((candidate) => candidate.top === 2)).toHaveLength(1);
    // In words: the uniform cells of each outcome as merged CIDR blocks, the commonest first.
    expect(view.uniform.map((group) => [group.rank, group.cells])).toEqual([[0, 255], [2, 1]]);
    expect(view.uniform[1].cidrs).toEqual(["192.0.2.0/24"]);
    expect(view.uniform[0].cidrs.slice(0, 3)).toEqual(["192.0.0.0/23", "192.0.3.0/24", "192.0.4.0/22"]);
    expect(addressCount(view.uniform[0].cidrs)).toBe(2n ** 16n - 256n); // the rest of the /16 (RFC 4632 §3.1)
    // A block typed into the URL is reached from its nearest view.
    expect(trailTo(4, segments, "192.0.2.0/24")).toEqual(["0.0.0.0/0", "192.0.0.0/16"]);
    expect(trailTo(4, segments, "192.0.2.0/25")).toEqual(["0.0.0.0/0", "192.0.0.0/16", "192.0.2.0/24"]);
  });

  test("IPv6 starts at ::/0 in /8 cells and reaches a /48 inside 2001:db8::/32 in one step, on a whole hex digit", () => {
    // Silent everywhere but 2001:db8:4c46::/48 (RFC 3849 documentation space), which gets a login with a second factor.
    const segments = segmentsOf(6, silentElsewhere(6, [[], [], [], [], ["2001:db8:4c46::/48"]]));
    const root = zoomView(6, segments, rootBlock(6));
    expect(root.cells).toHaveLength(256);
    expect(root.cellPrefix).toBe(8);
    const cell = cellAt(root, "2001:db8:4c46::1");
    expect(cell).toMatchObject({ cidr: "2000::/8", uniform: false, top: 4, special: "Global unicast, RFC 4291", marked: false });
    expect(cell.counts[4]).toBe((2n ** 80n).toString()); // a /48 holds 2^80 (RFC 4291 §2.5)
    expect(cell.zoom).toBe("2001:db8:4c40::/44");
    const view = zoomView(6, segments, cell.zoom!);
    expect(view.cellPrefix).toBe(52);
    expect(view.trail).toEqual(["::/0"]);
    expect(view.cells.filter((candidate) => candidate.top === 4 && candidate.uniform)).toHaveLength(16); // a /48 is 16 cells of /52
    expect(cellAt(view, "2001:db8:4c46::").cidr).toBe("2001:db8:4c46::/52"); // RFC 5952 text
    // Inside documentation space the view names it once rather than marking all 256 cells.
    expect(view.special).toBe("Documentation, RFC 3849");
    expect(view.cells.some((candidate) => candidate.marked)).toBe(false);
    expect(root.special).toBeNull();
    expect(cellAt(root, "fd00::1")).toMatchObject({ special: "Unique local, RFC 4193", marked: true });
  });

  test("Blocks for the picture are read by the engine's parser, in the right family, host bits cleared", () => {
    expect(parseViewBlock(4, "10.1.2.3/8")).toEqual({ ok: true, block: "10.0.0.0/8" });
    expect(parseViewBlock(4, "192.0.2.7")).toEqual({ ok: true, block: "192.0.2.7/32" });
    expect(parseViewBlock(6, "2001:DB8::/32")).toEqual({ ok: true, block: "2001:db8::/32" }); // RFC 5952 §4.3: lower case
    expect(parseViewBlock(4, "2001:db8::/32")).toEqual({ ok: false, problem: '"2001:db8::/32" is not an IPv4 block' });
    expect(parseViewBlock(6, "banana")).toEqual({ ok: false, problem: '"banana" is not a CIDR block' });
    expect(parseViewBlock(4, "10.0.0.0/33").ok).toBe(false);
  });

  test("The top outcome of an entry is the most exposed with a non-zero count", () => {
    expect(topRank(["4294967040", "0", "256", "0", "0", "0"])).toBe(2);
    expect(topRank(["0", "0", "0", "0", "0", "0"])).toBe(-1);
  });
});

describe("The week × hour grid", () => {
  test("A window crossing midnight (Sat 22:00 – Sun 04:00) colours exactly those hours", () => {
    // Slices as the engine gives them in local week minutes: Monday 00:00 = 0.
    const sat22 = 5 * 1440 + 22 * 60;
    const sun04 = 6 * 1440 + 4 * 60;
    const cells = weekHourGrid([
      { startMinute: sun04, endMinute: sat22, rank: 0 }, // wraps past Sunday 24:00 (end < start)
      { startMinute: sat22, endMinute: sun04, rank: 4 },
    ]);
    expect(cells).toHaveLength(168);
    const exposed = cells.flatMap((cell, index) => (cell.top === 4 ? [index] : []));
    expect(exposed).toEqual([5 * 24 + 22, 5 * 24 + 23, 6 * 24, 6 * 24 + 1, 6 * 24 + 2, 6 * 24 + 3]);
    expect(cells[0].top).toBe(0); // Monday 00:00 is in the wrapping slice
    expect(cells.some((cell) => cell.changes)).toBe(false);
  });

  test("A slice edge inside an hour takes the more exposed outcome and is marked as changing", () => {
    const cells = weekHourGrid([
      { startMinute: 8 * 60 + 30, endMinute: 17 * 60, rank: 5 },
      { startMinute: 17 * 60, endMinute: 8 * 60 + 30, rank: 0 }, // the rest of the week, wrapping
    ]);
    expect(cells[8]).toEqual({ top: 5, changes: true });
    expect(cells[7]).toEqual({ top: 0, changes: false });
    expect(cells[16]).toEqual({ top: 5, changes: false });
    expect(cells[17]).toEqual({ top: 0, changes: false });
    expect(cells[24 + 9].top).toBe(0); // Tuesday is not in the window
  });

  test("One slice for the whole week fills every hour", () => {
    const cells = weekHourGrid([{ startMinute: 0, endMinute: 10080, rank: 3 }]);
    expect(new Set(cells.map((cell) => cell.top))).toEqual(new Set([3]));
  });

  test("A support window: the operator network answers all week, the vendor only in the window, so only the vendor's addresses colour the hours", () => {
    // Invented scenario on documentation space (RFC 5737): 198.51.100.64/27 always gets a login with a
    // second factor (rank 4); 203.0.113.128/27 only Mon–Fri 08:00–17:00; everything else is silent.
    const quiet = segmentsOf(4, silentElsewhere(4, [[], [], [], [], ["198.51.100.64/27"]]));
    const window = segmentsOf(4, silentElsewhere(4, [[], [], [], [], ["198.51.100.64/27", "203.0.113.128/27"]]));
    const day = 1440;
    const slices = [
      ...[0, 1, 2, 3, 4].flatMap((weekday) => [
        { startMinute: weekday * day + 8 * 60, endMinute: weekday * day + 17 * 60, segments: window },
        // Friday's evening runs to the end of the week (end 0: wraps past Sunday 24:00).
        { startMinute: weekday * day + 17 * 60, endMinute: weekday === 4 ? 0 : (weekday + 1) * day + 8 * 60, segments: quiet },
      ]),
      { startMinute: 0, endMinute: 8 * 60, segments: quiet }, // Monday before the window
    ];
    const changes = weekChanges(4, slices);
    expect(changes.changing).toEqual(["203.0.113.128/27"]);
    expect(changes.changingBlocks).toBe(1);
    expect(changes.changingCount).toBe(32n); // a /27 holds 2^5 (RFC 4632 §3.1)
    expect(changes.steady[4]).toBe(32n);
    expect(changes.steady[0]).toBe(2n ** 32n - 64n);
    expect(changes.perSlice[0]).toEqual([0n, 0n, 0n, 0n, 32n, 0n]); // Monday's window
    expect(changes.perSlice[1]).toEqual([32n, 0n, 0n, 0n, 0n, 0n]);
    // Hours take the worst outcome of the changing addresses, so the window stands out.
    const hours = weekHourGrid(slices.map((slice, index) => ({ ...slice, rank: topRank(changes.perSlice[index].map(String)) })));
    expect(hours[8].top).toBe(4); // Monday 08:00
    expect(hours[7].top).toBe(0);
    expect(hours[17].top).toBe(0);
    expect(hours[5 * 24 + 10].top).toBe(0); // Saturday
    expect(hours.filter((cell) => cell.top === 4)).toHaveLength(5 * 9);
  });

  test("When every slice answers alike, nothing changes over the week", () => {
    const same = segmentsOf(6, silentElsewhere(6, [[], [], ["2001:db8::/32"]])); // RFC 3849
    const changes = weekChanges(6, [
      { startMinute: 0, endMinute: 600, segments: same },
      { startMinute: 600, endMinute: 0, segments: same },
    ]);
    expect(changes.changingCount).toBe(0n);
    expect(changes.changing).toEqual([]);
    expect(changes.steady[2]).toBe(2n ** 96n); // RFC 3849: 2001:db8::/32 holds 2^96
  });
});

describe("CSV writing (RFC 4180)", () => {
  test("Fields with commas, quotes or line breaks are quoted and quotes doubled (RFC 4180 §2.6, §2.7)", () => {
    expect(csvField("plain")).toBe("plain");
    expect(csvField("a,b")).toBe('"a,b"');
    expect(csvField('ssh is not listening on "outside"')).toBe('"ssh is not listening on ""outside"""');
    expect(csvField("two\nlines")).toBe('"two\nlines"');
    expect(csvField(null)).toBe("");
    expect(csvField(42)).toBe("42");
  });

  // OWASP CSV injection guidance: text a spreadsheet would run as a formula is neutralised.
  test("Text starting like a formula gets a leading apostrophe; numbers do not", () => {
    expect(csvField("=HYPERLINK(\"x\")")).toBe('"\'=HYPERLINK(""x"")"');
    expect(csvField("+1")).toBe("'+1");
    expect(csvField("-rule")).toBe("'-rule");
    expect(csvField("@sum")).toBe("'@sum");
    expect(csvField(-5)).toBe("-5");
  });

  test("Rows end with CRLF (RFC 4180 §2.1) and read back to the same fields", () => {
    const rows = [
      ["interface", "detail"],
      ["outside", 'no rule matches; "allow", by default'],
      ["inside", "line\r\nbreak"],
    ];
    const text = toCsv(rows);
    expect(text.startsWith("interface,detail\r\n")).toBe(true);
    expect(text.endsWith("\r\n")).toBe(true);
    expect(parseCsv(text)).toEqual(rows);
  });

  test("Numbers, empty values and formula-like text inside whole rows are written as by csvField", () => {
    expect(toCsv([["=1+1", 7, null, undefined, "", "@x,y"]])).toBe(`'=1+1,7,,,,"'@x,y"\r\n`); // OWASP CSV injection; RFC 4180 §2.6
    expect(toCsv([["\tcmd", "\rx", "a\rb"]])).toBe(`'\tcmd,"'\rx","a\rb"\r\n`); // a lone CR is a line break to many readers: quoted
  });
});

describe("CSV reading (RFC 4180)", () => {
  test("A quoted field holds commas, doubled quotes and line breaks (RFC 4180 §2.6, §2.7)", () => {
    expect(parseCsv('name,entries\r\n"a,b","say ""hi""\r\nand\nbye"\r\n')).toEqual([
      ["name", "entries"],
      ["a,b", 'say "hi"\r\nand\nbye'],
    ]);
  });

  test("CRLF, LF and CR end records alike, even mixed; a final line break makes no empty row (RFC 4180 §2.1–2.2)", () => {
    expect(parseCsv("a,b\r\nc,d\ne,f\rg,h\n")).toEqual([["a", "b"], ["c", "d"], ["e", "f"], ["g", "h"]]);
    expect(parseCsv("a,b")).toEqual([["a", "b"]]);
    expect(parseCsv("")).toEqual([]);
    // An empty line inside the text stays a row, so row numbers match the lines a person sees.
    expect(parseCsv("a\n\nb\n")).toEqual([["a"], [""], ["b"]]);
    // Rows may differ in length; the caller says what it expects.
    expect(parseCsv("a\nb,c,d\n")).toEqual([["a"], ["b", "c", "d"]]);
  });

  test("A byte-order mark at the start, as spreadsheets save it, is not part of the first field", () => {
    // Common practice, no source: spreadsheet programs write UTF-8 CSV with a BOM.
    expect(parseCsv("\uFEFFname,entries\n")).toEqual([["name", "entries"]]);
  });

  test("A stray or unclosed quote is refused with the line, never read as some other row", () => {
    // RFC 4180 §2.5: a field that is not enclosed in double quotes may not contain them.
    const cases: [string, number, string][] = [
      ['name,entries\nhq"admins,10.30.0.0/24\n', 2, "double quote inside an unquoted field"],
      ['name,entries\n"hq-admins,10.30.0.0/24\n', 2, "never closed"],
      ['name,entries\n"hq"-admins,10.30.0.0/24\n', 2, "after a closing double quote"],
    ];
    for (const [text, line, words] of cases) {
      let caught: unknown;
      try {
        parseCsv(text);
      } catch (error) {
        caught = error;
      }
      expect(caught, text).toBeInstanceOf(CsvSyntaxError);
      expect((caught as CsvSyntaxError).line, text).toBe(line);
      expect((caught as CsvSyntaxError).message, text).toContain(words);
      expect((caught as CsvSyntaxError).message, text).toMatch(new RegExp(`^line ${line}: `));
    }
  });
});

describe("Paging", () => {
  test("Pages clamp to what exists and never go below one", () => {
    expect(pageOf(null, 120)).toEqual({ page: 1, pages: 3, start: 0, end: 50 });
    expect(pageOf("3", 120)).toEqual({ page: 3, pages: 3, start: 100, end: 120 });
    expect(pageOf("99", 120).page).toBe(3);
    expect(pageOf("-2", 120).page).toBe(1);
    expect(pageOf("abc", 0)).toEqual({ page: 1, pages: 1, start: 0, end: 0 });
  });
});
