// A small standalone HTTP server for the crash test: POST /api/v1/tallies goes to the
// very route handler Next serves (app/api/v1/tallies/route.ts, so the same
// authentication, validation and lib/intake submitOnce transaction), without Next's
// seconds-long boot. Prints "ready <port>" once listening. Killed with SIGKILL by
// test/reliability/crash.test.ts.
import http from "node:http";
import { POST } from "@/app/api/v1/tallies/route";

const server = http.createServer((req, res) => {
  const chunks: Buffer[] = [];
  req.on("data", (c: Buffer) => chunks.push(c));
  req.on("end", async () => {
    try {
      const headers = new Headers();
      for (const [k, v] of Object.entries(req.headers)) if (typeof v === "string") headers.set(k, v);
      const request = new Request(`http://127.0.0.1${req.url}`, { method: req.method, headers, body: Buffer.concat(chunks) });
      const response = req.method === "POST" && req.url === "/api/v1/tallies" ? await POST(request) : new Response("not found", { status: 404 });
      res.writeHead(response.status, Object.fromEntries(response.headers));
      res.end(Buffer.from(await response.arrayBuffer()));
    } catch (error) {
      res.writeHead(500);
      res.end(String(error));
    }
  });
});
server.listen(0, "127.0.0.1", () => {
  const address = server.address();
  process.stdout.write(`ready ${typeof address === "object" && address ? address.port : 0}\n`);
});
