// The malformed-payload corpus (test/fixtures/malformed): every file must fail with the code and
// location its manifest names. The manifest's locations were computed by make-corpus.py from the
// file text, independently of the parsers.
import { readFileSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { isIngestError, isIngestErrorCode } from "./errors";
import { parsePayload, type PayloadFormat } from "./parse";

interface Entry {
  file: string;
  format: PayloadFormat;
  options: Record<string, unknown>;
  expect: { code: string; location: Record<string, unknown> };
  why: string;
}

const dir = path.resolve(import.meta.dirname, "../../test/fixtures/malformed");
const manifest = JSON.parse(readFileSync(path.join(dir, "manifest.json"), "utf8")) as { entries: Entry[] };

describe("malformed corpus", () => {
  it("has at least 30 files, each with a known code", () => {
    expect(manifest.entries.length).toBeGreaterThanOrEqual(30);
    for (const e of manifest.entries) expect(isIngestErrorCode(e.expect.code), e.file).toBe(true);
  });

  for (const entry of manifest.entries) {
    it(`${entry.file}: ${entry.expect.code}`, async () => {
      const bytes = readFileSync(path.join(dir, entry.file));
      // Strict: the first problem is thrown.
      let thrown: unknown;
      try {
        await parsePayload(entry.format, bytes, { ...entry.options, mode: "strict" });
      } catch (e) {
        thrown = e;
      }
      expect(isIngestError(thrown), `${entry.file} should throw an IngestError (${entry.why})`).toBe(true);
      if (!isIngestError(thrown)) return;
      expect(thrown.code).toBe(entry.expect.code);
      expect(thrown.location).toEqual(entry.expect.location);
      // Collect: the same problem comes first, and nothing is thrown.
      const collected = await parsePayload(entry.format, bytes, { ...entry.options, mode: "collect" });
      expect(collected.counts.issues).toBeGreaterThanOrEqual(1);
      expect(collected.issues[0]!.code).toBe(entry.expect.code);
      expect(collected.issues[0]!.location).toEqual(entry.expect.location);
    });
  }
});
