// JSON text in pieces: the same characters as JSON.stringify(value, null, indent), handed out
// a piece at a time, so a document far larger than one string (V8 strings stop near 2^29
// characters) is written in memory that does not grow with it.
//
// The walk keeps its own stack (no recursion, no nested generators). Each property is read
// once, in the order JSON.stringify reads it, with its rules (ECMA-262 SerializeJSONProperty:
// toJSON, boxed primitives, undefined / functions / symbols left out of objects and written
// as null in arrays, TypeError on cycles and BigInts). Arrays of plain primitives, the bulk
// of a large document (CIDR lists), are written by JSON.stringify itself, block by block.
// A value can also write itself (OWN_JSON): the CLI writes the exposure's CIDR lists as
// bytes from the address ranges, without making a string per CIDR.

export interface JsonPiecesOptions {
  /** Spaces per level, as JSON.stringify's third argument (0: compact). */
  readonly indent?: number;
  /** A piece is handed out once it holds this many characters. */
  readonly pieceSize?: number;
  /** Elements per native block of a primitive array: large enough to be fast, small enough to stay flat. */
  readonly blockSize?: number;
}

/** Key of the method by which a value writes its own JSON text. */
export const OWN_JSON: unique symbol = Symbol("sallyport.ownJson");

/** A value that writes its own JSON text. */
export interface OwnJson {
  /**
   * Exactly the text JSON.stringify(value, null, gap) would give the value it stands for,
   * its inner lines shifted by `at` (the indentation of the line it starts on), in pieces.
   */
  [OWN_JSON](at: string, gap: string): Iterable<string>;
}

function writesOwnJson(value: object): value is OwnJson {
  return typeof (value as Partial<OwnJson>)[OWN_JSON] === "function";
}

/** A value writing its own text, a piece per step. */
interface OwnFrame {
  readonly kind: "own";
  readonly pieces: Iterator<string, unknown, undefined>;
  readonly indent: string;
}

interface ArrayFrame {
  readonly kind: "array";
  readonly array: readonly unknown[];
  index: number;
  readonly indent: string;
}

/** A primitive array longer than one block, written a block per step. */
interface BlocksFrame {
  readonly kind: "blocks";
  readonly array: readonly unknown[];
  index: number;
  readonly indent: string;
}

interface ObjectFrame {
  readonly kind: "object";
  readonly object: Record<string, unknown>;
  readonly keys: readonly string[];
  index: number;
  /** Whether a property has been written: JSON.stringify writes "{}" when every one is left out. */
  wrote: boolean;
  readonly indent: string;
}

type Frame = ArrayFrame | BlocksFrame | ObjectFrame | OwnFrame;

/** The value JSON.stringify serialises for `value` under `key`: toJSON applied, boxed primitives unwrapped. */
function prepared(value: unknown, key: string): unknown {
  if ((typeof value === "object" && value !== null) || typeof value === "function" || typeof value === "bigint") {
    const toJSON: unknown = (value as { toJSON?: unknown }).toJSON;
    if (typeof toJSON === "function") value = toJSON.call(value, key);
  }
  if (typeof value === "object" && value !== null) {
    if (value instanceof Number) return Number(value);
    if (value instanceof String) return String(value);
    if (value instanceof Boolean || value instanceof BigInt) return value.valueOf();
  }
  return value;
}

/** Text of a prepared non-container value, or undefined where JSON leaves the value out. */
function primitiveText(value: unknown): string | undefined {
  switch (typeof value) {
    case "string":
      return JSON.stringify(value);
    case "number":
      return Number.isFinite(value) ? String(value) : "null";
    case "boolean":
      return value ? "true" : "false";
    case "bigint":
      return JSON.stringify(value); // the TypeError JSON.stringify throws
    case "object":
      return "null"; // only null reaches here
    default:
      return undefined; // undefined, function, symbol
  }
}

/** Whether JSON.stringify would write every element without calling anything (no objects, functions or BigInts). */
function holdsPlainPrimitives(array: readonly unknown[]): boolean {
  for (let i = 0; i < array.length; i++) {
    const v = array[i];
    if (v !== null && (typeof v === "object" || typeof v === "function" || typeof v === "bigint")) return false;
  }
  return true;
}

/**
 * JSON text of `value` in pieces of about `pieceSize` characters (a piece is longer only by
 * one string or one block of a primitive array); joined they are exactly
 * `JSON.stringify(value, null, indent)` — indent 0 is the compact form. Yields nothing where
 * JSON.stringify returns undefined.
 */
export function* jsonPieces(value: unknown, options: JsonPiecesOptions = {}): Generator<string, void, undefined> {
  const { indent = 0, pieceSize = 1 << 16, blockSize: BLOCK = 2048 } = options;
  const gap = " ".repeat(Math.max(0, Math.min(10, Math.floor(indent))));
  const compact = gap === "";
  const comma = compact ? "," : ",\n";
  const colon = compact ? ":" : ": ";
  const stack: Frame[] = [];
  const open: object[] = [];

  /**
   * JSON.stringify of a primitive array whose line starts at `at`, elements one level in.
   * Indented, JSON.stringify is asked for the elements' whole indentation as its gap when that
   * fits its limit of 10; otherwise its lines are shifted (JSON text holds no raw line breaks).
   * `brackets: false` leaves out "[" and "]" and the line breaks next to them (a block).
   */
  const nativeArray = (array: readonly unknown[], at: string, brackets: boolean): string => {
    if (compact) {
      const text = JSON.stringify(array);
      return brackets ? text : text.slice(1, -1);
    }
    const deep = at + gap;
    if (deep.length <= 10) {
      const text = JSON.stringify(array, null, deep);
      return brackets ? `${text.slice(0, -1)}${at}]` : text.slice(2, -2);
    }
    const text = JSON.stringify(array, null, gap).replaceAll("\n", `\n${at}`);
    return brackets ? text : text.slice(2, -2 - at.length);
  };

  /** Text that opens a prepared value; containers that need more than that go on the stack. */
  const begin = (v: unknown, at: string): string | undefined => {
    if (typeof v !== "object" || v === null) return primitiveText(v);
    if (open.includes(v)) throw new TypeError("Converting circular structure to JSON");
    if (writesOwnJson(v)) {
      stack.push({ kind: "own", pieces: v[OWN_JSON](at, gap)[Symbol.iterator](), indent: at });
      return "";
    }
    if (Array.isArray(v)) {
      if (v.length === 0) return "[]";
      if (holdsPlainPrimitives(v)) {
        if (v.length <= BLOCK) return nativeArray(v, at, true);
        stack.push({ kind: "blocks", array: v, index: 0, indent: at });
      } else {
        stack.push({ kind: "array", array: v, index: 0, indent: at });
      }
      open.push(v);
      return compact ? "[" : "[\n";
    }
    const object = v as Record<string, unknown>;
    stack.push({ kind: "object", object, keys: Object.keys(object), index: 0, wrote: false, indent: at });
    open.push(v);
    return "";
  };

  const close = (frame: ArrayFrame | BlocksFrame | ObjectFrame): string => {
    stack.pop();
    open.pop();
    if (frame.kind === "object") return frame.wrote ? (compact ? "}" : `\n${frame.indent}}`) : "{}";
    return compact ? "]" : `\n${frame.indent}]`;
  };

  const top = begin(prepared(value, ""), "");
  if (top === undefined) return;
  let buffer = top;

  while (stack.length > 0) {
    if (buffer.length >= pieceSize) {
      yield buffer;
      buffer = "";
    }
    const frame = stack[stack.length - 1];
    const inner = frame.indent + gap;
    switch (frame.kind) {
      case "own": {
        const next = frame.pieces.next();
        if (next.done === true) stack.pop();
        else buffer += next.value;
        break;
      }
      case "blocks": {
        if (frame.index >= frame.array.length) {
          buffer += close(frame);
          break;
        }
        const start = frame.index;
        frame.index += BLOCK;
        buffer += (start > 0 ? comma : "") + nativeArray(frame.array.slice(start, start + BLOCK), frame.indent, false);
        break;
      }
      case "array": {
        if (frame.index >= frame.array.length) {
          buffer += close(frame);
          break;
        }
        const i = frame.index++;
        if (i > 0) buffer += comma;
        if (!compact) buffer += inner;
        buffer += begin(prepared(frame.array[i], String(i)), inner) ?? "null";
        break;
      }
      case "object": {
        if (frame.index >= frame.keys.length) {
          buffer += close(frame);
          break;
        }
        const key = frame.keys[frame.index++];
        const property = prepared(frame.object[key], key);
        if (property === undefined || typeof property === "function" || typeof property === "symbol") break;
        buffer += frame.wrote ? comma : compact ? "{" : "{\n";
        frame.wrote = true;
        buffer += `${compact ? "" : inner}${JSON.stringify(key)}${colon}${begin(property, inner) ?? ""}`;
        break;
      }
    }
  }
  if (buffer !== "") yield buffer;
}
