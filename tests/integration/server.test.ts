import { connect, type Socket } from "node:net";
import { describe, expect, it } from "vitest";
import { APP_URL } from "../helpers/client";

/** Sends one GET on the socket and resolves with the status line of its answer. */
function get(socket: Socket, path: string): Promise<string> {
  return new Promise((resolve, reject) => {
    let text = "";
    const onData = (chunk: Buffer) => {
      text += chunk.toString("latin1");
      const head = text.indexOf("\r\n\r\n");
      if (head < 0) return;
      const length = /\r\ncontent-length: (\d+)/i.exec(text.slice(0, head));
      // The whole answer: its stated length, or a chunked body's last (empty) chunk.
      if (length ? text.length >= head + 4 + Number(length[1]) : text.endsWith("\r\n0\r\n\r\n")) {
        socket.off("data", onData);
        socket.off("close", onClose);
        resolve(text.slice(0, text.indexOf("\r\n")));
      }
    };
    const onClose = () => reject(new Error(`the server closed the connection before answering ${path}`));
    socket.on("data", onData);
    socket.once("close", onClose);
    socket.write(`GET ${path} HTTP/1.1\r\nHost: ${new URL(APP_URL).host}\r\nConnection: keep-alive\r\n\r\n`);
  });
}

describe("the server's connections", () => {
  it("an idle keep-alive connection stays open past Node's 5 s default, so the client closes it, not the server", async () => {
    const url = new URL(APP_URL);
    const socket = connect(Number(url.port), url.hostname);
    await new Promise((resolve) => socket.once("connect", resolve));
    let closedAt: number | null = null;
    socket.once("close", () => (closedAt = Date.now()));
    try {
      expect(await get(socket, "/healthz")).toBe("HTTP/1.1 200 OK");
      await new Promise((resolve) => setTimeout(resolve, 6500));
      expect(closedAt).toBeNull();
      expect(await get(socket, "/healthz")).toBe("HTTP/1.1 200 OK");
    } finally {
      socket.destroy();
    }
  }, 15_000);
});
