/**
 * The `ideafront` command line. Each command lives in lib/cli/commands/<name>.ts; a command module
 * only declares its options and imports its implementation when it runs, so every command starts
 * fast and loads the database driver only when it needs one.
 */
import { Command } from "commander";
import { APP_VERSION } from "../version";
import { reportError } from "./shared";

const program = new Command();
program
  .name("ideafront")
  .description("Research effort and long-run growth: store statistical vintages, fit the knowledge production function, compare vintages.")
  .version(APP_VERSION)
  .showHelpAfterError("(add --help for usage)")
  .configureHelp({ sortSubcommands: false });

type Loader = () => Promise<{ register(program: Command): void }>;
const commands: Loader[] = [
  () => import("./commands/setup"),
  () => import("./commands/data"),
  () => import("./commands/fit"),
  () => import("./commands/tfp"),
];

for (const load of commands) (await load()).register(program);

try {
  await program.parseAsync(process.argv);
} catch (err) {
  process.exitCode = reportError(err);
}
