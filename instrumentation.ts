// Runs once when the Next server starts (Node runtime only): open and migrate the store, complete
// the demo workspace, start the scheduler. A bad setting stops the server with one sentence.
export async function register(): Promise<void> {
  if (process.env.NEXT_RUNTIME !== "nodejs") return;
  const { startServer } = await import("./lib/startup");
  await startServer();
}
