/**
 * Next.js calls register() once when a server instance starts (Next 15+: stable, no
 * config flag). It must return before the server takes requests, so nothing long is
 * awaited here: in the Node.js runtime it starts the background scan warm-up of
 * instrumentation-node.ts. The runtime check keeps that module (and its Node APIs) out
 * of the Edge build.
 */
export async function register(): Promise<void> {
  if (process.env.NEXT_RUNTIME === "nodejs") {
    const { startServerWork } = await import("./instrumentation-node");
    startServerWork();
  }
}
