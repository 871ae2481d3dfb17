// SDMX-JSON read as a stream: any chunking gives the same result, and JSON syntax errors are
// placed at the line and column of the offending character.
import { Readable } from "node:stream";
import { describe, expect, it } from "vitest";
import { parseSdmxJson, parseSdmxJsonStream } from "./sdmx-json";
import type { ParsedObservation } from "./common";

const TEXT = `{
  "header": {"id": "S", "prepared": "2024-02-01T00:00:00Z"},
  "structure": {"dimensions": {"series": [{"id": "REF_AREA", "keyPosition": 0, "values": [{"id": "FRA"}, {"id": "CÔTE"}]}],
    "observation": [{"id": "TIME_PERIOD", "keyPosition": 1, "values": [{"id": "2019-Q1"}, {"id": "2019-Q2"}]}]}},
  "dataSets": [{"action": "Replace", "series": {"0": {"observations": {"0": [1.5], "1": [1.6]}}, "1": {"observations": {"0": [2.5], "1": [2.6]}}}}]
}`;

function chunks(bytes: Buffer, size: number): Readable {
  const parts: Buffer[] = [];
  for (let i = 0; i < bytes.length; i += size) parts.push(bytes.subarray(i, i + size));
  return Readable.from(parts);
}

describe("SDMX-JSON streaming", () => {
  it("gives the same observations for one-byte, seven-byte and whole input", async () => {
    const whole = await parseSdmxJson(TEXT);
    expect(whole.counts.observations).toBe(4);
    for (const size of [1, 7]) {
      const seen: ParsedObservation[] = [];
      const summary = await parseSdmxJsonStream(chunks(Buffer.from(TEXT), size), {}, (o) => seen.push(o));
      expect(seen, `chunks of ${size}`).toEqual(whole.observations);
      expect(summary.meta.prepared).toBe("2024-02-01T00:00:00Z");
    }
    // "CÔTE" has a two-byte character: split across one-byte chunks it still decodes
    expect(whole.observations[2]!.dimensions.REF_AREA).toBe("CÔTE");
  });

  it("places a syntax error at its line and column, also when chunks split the text", async () => {
    const broken = TEXT.replace('"1": [2.6]', '"1": [2.6}');
    const index = broken.indexOf("2.6}") + 3;
    const line = broken.slice(0, index).split("\n").length;
    const column = [...broken.slice(broken.lastIndexOf("\n", index - 1) + 1, index)].length + 1; // characters, "Ô" counts once
    for (const input of [broken, chunks(Buffer.from(broken), 5)]) {
      await expect(parseSdmxJson(input)).rejects.toMatchObject({ code: "JSON_SYNTAX", location: { line, column } });
    }
  });

  it("places a duplicate member name by where its token starts, even chunks back", async () => {
    const text = TEXT.replace('"0": [2.5], "1": [2.6]', '"0": [2.5], "0": [2.6]');
    const index = text.lastIndexOf('"0": [2.6]');
    const line = text.slice(0, index).split("\n").length;
    const column = [...text.slice(text.lastIndexOf("\n", index - 1) + 1, index)].length + 1;
    for (const input of [text, chunks(Buffer.from(text), 1)]) {
      await expect(parseSdmxJson(input)).rejects.toMatchObject({ code: "JSON_DUPLICATE_KEY", location: { line, column } });
    }
  });

  it("skips a leading byte-order mark", async () => {
    const r = await parseSdmxJson(Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), Buffer.from(TEXT)]));
    expect(r.counts.observations).toBe(4);
  });

  it("accepts a U+FEFF inside a JSON string: only one between tokens is a stray mark", async () => {
    // (@streamparser/json decodes string pieces with TextDecoder, which drops a U+FEFF that
    // starts a piece, so the character itself may not survive; the message is still read.)
    const r = await parseSdmxJson(TEXT.replace('"id": "S"', '"id": "S\uFEFF"'));
    expect(r.counts).toEqual({ observations: 4, skipped: 0, issues: 0 });
    expect(r.meta.messageId?.startsWith("S")).toBe(true);
  });

  it("reports a message that is JSON but not SDMX-JSON", async () => {
    await expect(parseSdmxJson('{"hello": [1, 2]}')).rejects.toMatchObject({ code: "JSON_UNEXPECTED_SHAPE", location: { path: "$" } });
  });
});
