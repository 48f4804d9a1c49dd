// React Router's request handler on Express, with a response writer suited to compression.
// The framework's own adapter (@react-router/express) flushes the compressor after every chunk
// the server render writes, so a 40 KB page went out as a score of small compressed blocks and
// socket writes, and a 400-byte JSON answer was compressed too (its length unknown to the
// compressor). Here a body up to BUFFERED_BYTES is read whole and sent in one write with its
// Content-Length: compression skips it below its threshold and compresses the rest in one pass.
// A longer body (a model export) is streamed on, compressed as it goes, flushed once at its end.
// No route streams deferred data, so reading a page whole delays nothing.
import type { Request as ExpressRequest, Response as ExpressResponse, NextFunction } from "express";
import { createReadableStreamFromReadable } from "@react-router/node";
import { createRequestHandler as createRouterHandler, type RouterContextProvider, type ServerBuild } from "react-router";
import { handOff } from "./admission.server.ts";

/** Bodies up to this size are sent in one write with their length (measured pages are 40–170 KB). */
export const BUFFERED_BYTES = 1024 * 1024;

export function createRequestHandler(options: { build: ServerBuild; mode: string; getLoadContext: (request: ExpressRequest, response: ExpressResponse) => RouterContextProvider }) {
  const handle = createRouterHandler(options.build, options.mode);
  return async (request: ExpressRequest, response: ExpressResponse, next: NextFunction) => {
    try {
      const answer = await handle(toFetchRequest(request, response), options.getLoadContext(request, response));
      await sendAnswer(response, answer);
    } catch (error) {
      next(error);
    }
  };
}

/** The Fetch request React Router reads, built as the framework's adapter builds it (canonicalOrigin has fixed host and scheme). */
function toFetchRequest(request: ExpressRequest, response: ExpressResponse): Request {
  const [, hostPortText] = request.get("host")?.split(":") ?? [];
  const hostPort = Number.parseInt(hostPortText ?? "", 10);
  const hostname = request.hostname.split(/[\\/?#@]/)[0] || "localhost";
  const url = new URL(`${request.protocol}://${hostname}${Number.isSafeInteger(hostPort) ? `:${hostPort}` : ""}${request.originalUrl}`);
  const headers = new Headers();
  for (const [key, values] of Object.entries(request.headers)) {
    if (Array.isArray(values)) for (const value of values) headers.append(key, value);
    else if (values) headers.set(key, values);
  }
  let controller: AbortController | null = new AbortController();
  response.on("finish", () => (controller = null));
  response.on("close", () => controller?.abort());
  const init: RequestInit & { duplex?: "half" } = { method: request.method, headers, signal: controller.signal };
  if (request.method !== "GET" && request.method !== "HEAD") {
    init.body = createReadableStreamFromReadable(request);
    init.duplex = "half";
  }
  return new Request(url.href, init);
}

/**
 * Writes the answer: whole with its length when short, else streamed minding back-pressure. Its
 * admission turn (takingTurns) ends once a short body is written, or a long one's first part: the
 * work is done by then, and a client reading a large export slowly must not keep others out.
 */
export async function sendAnswer(response: ExpressResponse, answer: Response): Promise<void> {
  if (response.destroyed || response.writableEnded) {
    await answer.body?.cancel();
    return;
  }
  response.statusMessage = answer.statusText;
  response.status(answer.status);
  for (const [key, value] of answer.headers.entries()) response.append(key, value);
  if (!answer.body) {
    response.end();
    handOff(response);
    return;
  }
  const reader = answer.body.getReader();
  const closed = new Promise<"closed">((resolve) => response.once("close", () => resolve("closed")));
  try {
    const chunks: Uint8Array[] = [];
    let size = 0;
    for (;;) {
      const read = await Promise.race([reader.read(), closed]);
      if (read === "closed") throw new Error("the client went away");
      if (read.done) {
        response.setHeader("Content-Length", size);
        response.end(Buffer.concat(chunks, size));
        handOff(response);
        return;
      }
      chunks.push(read.value);
      size += read.value.byteLength;
      if (size > BUFFERED_BYTES) break;
    }
    // A long body: what was read so far, then the rest as it comes, minding back-pressure. The
    // answer is made by now (a long one is an export's text); what is left goes at the client's pace.
    for (const chunk of chunks) response.write(chunk);
    handOff(response);
    for (;;) {
      const read = await Promise.race([reader.read(), closed]);
      if (read === "closed") throw new Error("the client went away");
      if (read.done) break;
      if (!response.write(read.value)) {
        const drained = new Promise<"drained">((resolve) => response.once("drain", () => resolve("drained")));
        if ((await Promise.race([drained, closed])) === "closed") throw new Error("the client went away");
      }
    }
    response.end();
  } catch (error) {
    await reader.cancel().catch(() => undefined);
    if (!response.destroyed && !response.writableEnded) response.destroy(error instanceof Error ? error : undefined);
  }
}
