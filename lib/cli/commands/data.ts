/** Data commands: import a release from a file, list revisions between vintages, fetch sources, manage sources. */
import type { Command } from "commander";

const FORMATS = ["csv", "sdmx-json", "sdmx-csv", "jsonstat", "worldbank-json"];

function collect(value: string, previous: string[]): string[] {
  return [...previous, value];
}

export function register(program: Command): void {
  program
    .command("import")
    .description("import a file as one whole release (vintage) of a source; nothing is stored unless the whole file is clean")
    .requiredOption("--file <path>", "the file to import")
    .requiredOption("--format <format>", `payload format: ${FORMATS.join(", ")}`)
    .requiredOption("--concept <concept>", "what the values measure, e.g. researchers_per_million, population, tfp_index")
    .requiredOption("--source <name>", "source slug; created as an import-only file source when new")
    .requiredOption("--vintage <label>", "label of the release, usually its publication date (YYYY-MM-DD)")
    .option("--map <mapping>", "csv only: economy=COL,period=COL,value=COL[,status=COL] (long layout) or economy=COL (wide)")
    .option("--layout <layout>", "csv only: long or wide", "long")
    .option("--unit <unit>", "unit as published (default: the concept's usual unit); {NAME} reads it from dimension NAME")
    .option("--scale <factor>", "multiplier from published values to the stored unit (1000 for values in thousands)", "1")
    .option("--filter <dim=value>", "keep only observations whose dimension has this value (repeatable)", collect, [])
    .option("--economy-dimension <name>", "dimension carrying the economy (default: REF_AREA for SDMX, geo for JSON-stat, the mapped column for csv)")
    .option("--economy-map <code=ISO3>", "map a published economy code to an ISO 3166-1 alpha-3 code (repeatable), e.g. EL=GRC", collect, [])
    .option("--skip-unknown-economies", "leave out codes with no ISO 3166-1 alpha-3 equivalent (e.g. aggregates such as EU28), listing them, instead of refusing the file")
    .option("--title <title>", "title of a new source")
    .option("--released <date>", "the publisher's own release date, when different from the label")
    .action(async (opts) => {
      const { runImport } = await import("../run-data");
      await runImport(opts);
    });

  program
    .command("revisions")
    .description("list what changed between two vintages of a source: added, revised (old and new values) and removed values")
    .requiredOption("--source <name>", "source slug")
    .requiredOption("--from <label>", "the earlier vintage label")
    .requiredOption("--to <label>", "the later vintage label")
    .option("--concept <concept>", "only this concept")
    .option("--csv <file>", "write every changed value with old and new values to this CSV file")
    .action(async (opts) => {
      const { runRevisions } = await import("../run-data");
      await runRevisions(opts);
    });

  program
    .command("fetch")
    .description("fetch enabled sources now (or one named source), store new vintages and refit the active specs")
    .option("--source <name>", "only this source (it may be disabled)")
    .option("--no-refit", "store new vintages without refitting")
    .action(async (opts) => {
      const { runFetch } = await import("../run-data");
      await runFetch(opts);
    });

  const sources = program.command("sources").description("list, add, enable and disable sources");
  sources
    .command("list")
    .description("configured sources with their latest vintage")
    .action(async () => {
      const { runSourcesList } = await import("../run-data");
      await runSourcesList();
    });
  sources
    .command("add")
    .description("add a source from the built-in catalog of public APIs or from a definition file (JSON)")
    .option("--catalog <name>", "a catalog definition (see `sources catalog`)")
    .option("--definition <file>", "a JSON source definition")
    .action(async (opts) => {
      const { runSourcesAdd } = await import("../run-data");
      await runSourcesAdd(opts);
    });
  sources
    .command("catalog")
    .description("definitions of public statistics APIs shipped with the tool (all disabled until enabled)")
    .action(async () => {
      const { runSourcesCatalog } = await import("../run-data");
      runSourcesCatalog();
    });
  for (const [name, enabled] of [["enable", true], ["disable", false]] as const) {
    sources
      .command(`${name} <source>`)
      .description(`${name} scheduled fetching of a source`)
      .action(async (source: string) => {
        const { runSourcesEnable } = await import("../run-data");
        await runSourcesEnable(source, enabled);
      });
  }
}
