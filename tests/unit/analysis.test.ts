// Helpers behind the reach and exposure map pages: readable counts (app/utils/analysis.ts),
// address-space grids from CIDR lists (server/analysis/address-grids.ts), the week × hour grid,
// paging, and CSV reading and writing (server/formats/csv.ts).

import { describe, expect, test } from "vitest";
import {
  addressCount,
  buildGrid,
  cellsPerRank,
  cidrBlock,
  gridCellCount,
  gridRuns,
  IPV4_GRID,
  IPV6_GRIDS,
  NO_RANK,
  topRank,
} from "#server/analysis/address-grids";
import { pageOf } from "#server/analysis/paging";
import { weekHourGrid } from "#server/analysis/week-hours";
import { answerReach } from "#server/analysis/reach.server";
import { AddressSyntaxError, parseEntry } from "#server/engine/addresses";
import { compileModel, parseModel } from "#server/engine/index";
import { csvField, CsvSyntaxError, parseCsv, toCsv } from "#server/formats/csv";

const RFC1918 = ["10.0.0.0/8", "172.16.0.0/12", "192.168.0.0/16"];
const RFC5737 = ["192.0.2.0/24", "198.51.100.0/24", "203.0.113.0/24"];

/** The grid cell (first octet row, second octet column) of an IPv4 address. */
const cellOf = (a: number, b: number) => a * 256 + b;

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
      expect(cellsPerRank(buildGrid(IPV4_GRID, [[bad]])), bad).toEqual([0, 0, 0, 0, 0, 0]);
    }
    // The reach page's source address goes through the engine too.
    const parsed = parseModel({ schemaVersion: 1, device: { name: "edge" }, interfaces: [{ name: "outside", addresses: ["192.0.2.1/24"] }] });
    if (!parsed.ok) throw new Error(JSON.stringify(parsed.errors));
    const answer = answerReach(compileModel(parsed.model), { from: "010.0.0.1", at: "" });
    expect(answer.ok).toBe(false);
    expect(!answer.ok && answer.errors.from).toContain('"010.0.0.1"');
    // What the engine accepts, the pages read as the same block.
    for (const good of ["10.0.0.1", "192.0.2.0/24", "2001:db8::/32"]) expect(cidrBlock(good)).toEqual(parseEntry(good).range);
  });
});

describe("The IPv4 picture: one cell per /16", () => {
  test("The grid has 65,536 cells (2^32 / 2^16, RFC 4632 §3.1)", () => {
    expect(gridCellCount(IPV4_GRID)).toBe(65_536);
  });

  test("RFC 1918 space covers 256 + 16 + 1 cells, and those cells take the outcome of that space", () => {
    // Private space answers with a login; everything else is silent. Ranks: 0 silent, 5 login-password.
    const silent = ["0.0.0.0/5", "8.0.0.0/7", "11.0.0.0/8", "12.0.0.0/6", "16.0.0.0/4", "32.0.0.0/3", "64.0.0.0/2", "128.0.0.0/3", "160.0.0.0/5", "168.0.0.0/6", "172.0.0.0/12", "172.32.0.0/11", "172.64.0.0/10", "172.128.0.0/9", "173.0.0.0/8", "174.0.0.0/7", "176.0.0.0/4", "192.0.0.0/9", "192.128.0.0/11", "192.160.0.0/13", "192.169.0.0/16", "192.170.0.0/15", "192.172.0.0/14", "192.176.0.0/12", "192.192.0.0/10", "193.0.0.0/8", "194.0.0.0/7", "196.0.0.0/6", "200.0.0.0/5", "208.0.0.0/4", "224.0.0.0/3"];
    // The test input itself is a partition: its sizes add up to the whole space.
    expect(addressCount(silent) + addressCount(RFC1918)).toBe(2n ** 32n); // RFC 4632 §3.1
    const cells = buildGrid(IPV4_GRID, [silent, [], [], [], [], RFC1918]);
    const perRank = cellsPerRank(cells);
    // 10/8 = 16,777,216 / 65,536 = 256 cells; 172.16/12 = 16 cells; 192.168/16 = 1 cell (RFC 1918 §3 sizes).
    expect(perRank[5]).toBe(Number(addressCount(RFC1918) / 65_536n));
    expect(perRank[5]).toBe(273);
    expect(perRank[0]).toBe(65_536 - 273);
    expect(cells[cellOf(10, 0)]).toBe(5);
    expect(cells[cellOf(10, 255)]).toBe(5);
    expect(cells[cellOf(172, 15)]).toBe(0);
    expect(cells[cellOf(172, 16)]).toBe(5);
    expect(cells[cellOf(172, 31)]).toBe(5);
    expect(cells[cellOf(172, 32)]).toBe(0);
    expect(cells[cellOf(192, 168)]).toBe(5);
    expect(cells.includes(NO_RANK)).toBe(false);
  });

  test("A block smaller than a cell still colours its cell with the most exposed outcome present", () => {
    // RFC 5737 documentation /24s answer ping (rank 2); the rest of each /16 is silent.
    const cells = buildGrid(IPV4_GRID, [["0.0.0.0/0"], [], RFC5737]);
    expect(cellsPerRank(cells)[2]).toBe(3);
    expect(cells[cellOf(192, 0)]).toBe(2);
    expect(cells[cellOf(198, 51)]).toBe(2);
    expect(cells[cellOf(203, 0)]).toBe(2);
    expect(cells[cellOf(203, 1)]).toBe(0);
  });

  test("Runs compress the picture row by row and cover every cell once", () => {
    const cells = buildGrid(IPV4_GRID, [["0.0.0.0/0"], [], RFC5737]);
    const runs = gridRuns(cells, 256);
    expect(runs.reduce((total, run) => total + run.length, 0)).toBe(65_536);
    // 253 plain rows + 3 rows split in three (before, the cell, after) or two at the edge.
    expect(runs.length).toBe(253 + 2 + 3 + 2);
    expect(runs.find((run) => run.rank === 2 && run.row === 198)).toEqual({ row: 198, column: 51, length: 1, rank: 2 });
  });

  test("The IPv6 pictures cut 2000::/3 and fc00::/7 into /12 cells", () => {
    expect(IPV6_GRIDS.map(gridCellCount)).toEqual([512, 32]); // 2^(12−3), 2^(12−7)
    const cells = buildGrid(IPV6_GRIDS[0], [["::/0"], [], [], [], ["2001:db8::/32"]]); // RFC 3849 inside 2000::/12
    expect(cells[0]).toBe(4);
    expect(cellsPerRank(cells)[4]).toBe(1);
    const ula = buildGrid(IPV6_GRIDS[1], [["::/1"], ["fd00::/8"]]); // RFC 4193 L=1 half: fd00::/8 = 16 cells of /12
    expect(cellsPerRank(ula)).toEqual([0, 16, 0, 0, 0, 0]);
    expect(ula.filter((rank) => rank === NO_RANK).length).toBe(16);
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
