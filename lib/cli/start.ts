// npm start : applies pending migrations, then serves the built app on PORT (default 3000).
import { applyPendingMigrations } from "../db/migrate";
import { port, runNext } from "./serve";

const applied = await applyPendingMigrations();
if (applied.length) console.log(`applied migrations: ${applied.join(", ")}`);
process.exit(await runNext(["start", "-p", String(port())]));
