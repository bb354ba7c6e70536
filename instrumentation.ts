/**
 * Next.js calls register() once when a server instance starts (Next 15+: stable, no
 * config flag) and waits for it before the server takes requests. In the Node.js runtime
 * it creates the default comparisons on a fresh database first (a few short writes,
 * before any floor POST can arrive) and then starts the background scan warm-up of
 * instrumentation-node.ts, which is not waited for. The runtime check keeps that module
 * (and its Node APIs) out of the Edge build.
 */
export async function register(): Promise<void> {
  if (process.env.NEXT_RUNTIME === "nodejs") {
    const { prepareServer, startServerWork } = await import("./instrumentation-node");
    await prepareServer();
    startServerWork();
  }
}
