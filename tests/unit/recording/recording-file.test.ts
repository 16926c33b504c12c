import { crc32 as referenceCrc32 } from "crc";
import { gzipSync } from "fflate";
import fc from "fast-check";
import seedrandom from "seedrandom";
import { describe, expect, it } from "vitest";
import type { ChannelDefinition, ChannelValue } from "../../../shared/recording/channels";
import type { Frame } from "../../../shared/recording/frames";
import { crc32 } from "../../../shared/recording/gzip";
import {
  parseRecording,
  RecordingParser,
  serializeFrame,
  writeRecording,
  type RecordingHeader,
} from "../../../shared/recording/recording-file";
import { DEFAULT_MAX_BYTES, utf8ByteLength } from "../../../shared/recording/text-input";
import { file, headerLine, recordingFailure, testHeader } from "./helpers";

const encoder = new TextEncoder();

const sample = file(
  '{"t":0,"v":{"alt.baro_ft":250,"gear.handle":"DOWN","elec.master":false,"xpdr.code":"1200"}}',
  '{"t":500,"v":{"elec.master":true}}',
  '{"t":1000,"v":{"alt.baro_ft":300,"gear.handle":"DOWN"}}',
  '{"t":1000,"v":{"alt.baro_ft":300,"xpdr.code":"7000"}}',
  "",
  '{"t":2500,"v":{"gear.handle":"UP"}}',
);

const sampleFrames: Frame[] = [
  { t: 0, v: { "alt.baro_ft": 250, "gear.handle": "DOWN", "elec.master": false, "xpdr.code": "1200" } },
  { t: 500, v: { "elec.master": true } },
  // The repeated, unchanged gear value is dropped; the two lines at 1000 ms merge.
  { t: 1000, v: { "alt.baro_ft": 300, "xpdr.code": "7000" } },
  { t: 2500, v: { "gear.handle": "UP" } },
];

describe("Panelproof recording parser", () => {
  it("reads the header and emits frames holding only changed values", () => {
    const { header, frames } = parseRecording(sample);
    expect(header).toEqual(testHeader);
    expect(frames).toEqual(sampleFrames);
  });

  it("gives the same frames however the text is split into chunks, as text or as bytes", () => {
    const text = sample.replace('"bench notes"', '"bench notes: Überprüfung ✈ 🛩"');
    const bytes = encoder.encode(text);
    const expected = parseRecording(text).frames;
    expect(expected).toEqual(sampleFrames);
    for (let cut = 1; cut < bytes.length; cut += 7) {
      expect(parseRecording([text.slice(0, cut), text.slice(cut)]).frames).toEqual(expected);
      // Cuts land inside multi-byte characters too.
      expect(parseRecording([bytes.slice(0, cut), bytes.slice(cut)]).frames).toEqual(expected);
    }
    const oneByteAtATime = Array.from(bytes, (b) => new Uint8Array([b]));
    expect(parseRecording(oneByteAtATime).frames).toEqual(expected);
  });

  it("emits frames as it goes, holding back only the latest instant", () => {
    const parser = new RecordingParser();
    const lines = sample.split("\n");
    expect(parser.push(`${lines[0]}\n${lines[1]}\n`)).toEqual([]);
    expect(parser.push(`${lines[2]}\n`)).toEqual([sampleFrames[0]]);
    expect(parser.push(`${lines[3]}\n${lines[4]}\n`)).toEqual([sampleFrames[1]]);
    expect(parser.push(lines.slice(5).join("\n"))).toEqual([sampleFrames[2]]);
    expect(parser.end()).toEqual([sampleFrames[3]]);
    expect(parser.framesEmitted).toBe(4);
  });

  it("accepts CRLF line ends and a byte-order mark", () => {
    const text = `\ufeff${sample.replaceAll("\n", "\r\n")}`;
    expect(parseRecording(text).frames).toEqual(sampleFrames);
    expect(parseRecording(encoder.encode(text)).frames).toEqual(sampleFrames);
  });

  it("reads gzip input, whole or in chunks, with the size limit on the unpacked text", () => {
    const packed = gzipSync(encoder.encode(sample));
    expect(parseRecording(packed).frames).toEqual(sampleFrames);
    const chunks = [packed.slice(0, 1), packed.slice(1, 15), packed.slice(15)];
    expect(parseRecording(chunks).frames).toEqual(sampleFrames);
    const tooSmall = recordingFailure(() => parseRecording(packed, { maxBytes: utf8ByteLength(sample) - 1 }));
    expect(tooSmall.code).toBe("too_large");
  });
});

describe("Panelproof recording rejections say where and why", () => {
  it("malformed JSON: line and column", () => {
    const error = recordingFailure(() => parseRecording(file('{"t":0,"v":{"elec.master":true}}', '{"t":1,}')));
    expect(error.code).toBe("malformed_json");
    expect(error.where).toEqual({ line: 3, column: 8 });
    expect(error.message).toBe("line 3, column 8: malformed JSON: Expected double-quoted property name");
  });

  it("a cut-off last line is malformed JSON on that line", () => {
    const error = recordingFailure(() => parseRecording(`${headerLine}\n{"t":0,"v":{"elec.mas`));
    expect(error.code).toBe("malformed_json");
    expect(error.where.line).toBe(2);
  });

  it("unknown format version and a file that is not ours", () => {
    const newer = JSON.stringify({ ...testHeader, version: 2 });
    const version = recordingFailure(() => parseRecording(`${newer}\n{"t":0,"v":{}}\n`));
    expect(version.code).toBe("unknown_version");
    expect(version.message).toBe("line 1, field version: unknown format version 2; this build reads version 1");

    const other = recordingFailure(() => parseRecording('{"format":"something-else","version":1}\n'));
    expect(other.code).toBe("unknown_format");
    expect(other.where).toEqual({ line: 1, field: "format" });

    const frameFirst = recordingFailure(() => parseRecording('{"t":0,"v":{"elec.master":true}}\n'));
    expect(frameFirst.code).toBe("not_a_header");
  });

  it("a header with a bad channel list points at the field", () => {
    const header = JSON.stringify({
      ...testHeader,
      channels: [testHeader.channels[0], { name: "gear.handle", kind: "enum", values: [] }],
    });
    const error = recordingFailure(() => parseRecording(`${header}\n`));
    expect(error.code).toBe("invalid_header");
    expect(error.where).toEqual({ line: 1, field: "channels[1].values" });
    expect(error.why).toBe("must name at least one value");

    const duplicate = JSON.stringify({ ...testHeader, channels: [testHeader.channels[2], testHeader.channels[2]] });
    const dup = recordingFailure(() => parseRecording(`${duplicate}\n`));
    expect(dup.where.field).toBe("channels[1].name");
  });

  it("time going backwards", () => {
    const error = recordingFailure(() =>
      parseRecording(file('{"t":2000,"v":{"elec.master":true}}', '{"t":1500,"v":{"elec.master":false}}')),
    );
    expect(error.code).toBe("time_backwards");
    expect(error.message).toBe("line 3, field t: time 1500 ms is before the previous frame's 2000 ms");
  });

  it("duplicate time with conflicting values, but not with agreeing ones", () => {
    const error = recordingFailure(() =>
      parseRecording(
        file('{"t":0,"v":{"gear.handle":"UP"}}', '{"t":40,"v":{"gear.handle":"DOWN"}}', '{"t":40,"v":{"gear.handle":"UP"}}'),
      ),
    );
    expect(error.code).toBe("conflicting_duplicate");
    expect(error.where).toEqual({ line: 4, channel: "gear.handle" });
    expect(error.why).toBe('time 40 ms appears again with "UP" where it already had "DOWN"');

    const agreeing = parseRecording(
      file('{"t":0,"v":{"gear.handle":"UP"}}', '{"t":40,"v":{"gear.handle":"DOWN"}}', '{"t":40,"v":{"gear.handle":"DOWN","elec.master":true}}'),
    );
    expect(agreeing.frames).toEqual([
      { t: 0, v: { "gear.handle": "UP" } },
      { t: 40, v: { "gear.handle": "DOWN", "elec.master": true } },
    ]);
  });

  it("NaN and infinite numbers, however they are spelled", () => {
    const literal = recordingFailure(() => parseRecording(file('{"t":0,"v":{"alt.baro_ft":NaN}}')));
    expect(literal.code).toBe("not_finite");
    expect(literal.where).toEqual({ line: 2, column: 27 });

    // JSON.parse turns an overflowing literal into Infinity.
    const overflow = recordingFailure(() => parseRecording(file('{"t":0,"v":{"alt.baro_ft":1e999}}')));
    expect(overflow.code).toBe("not_finite");
    expect(overflow.where).toEqual({ line: 2, field: "v", channel: "alt.baro_ft" });

    for (const spelled of ['"NaN"', '"Infinity"', '"-inf"']) {
      const error = recordingFailure(() => parseRecording(file(`{"t":0,"v":{"alt.baro_ft":${spelled}}}`)));
      expect(error.code, spelled).toBe("not_finite");
      expect(error.where.channel).toBe("alt.baro_ft");
    }
    const time = recordingFailure(() => parseRecording(file('{"t":1e999,"v":{}}')));
    expect(time.code).toBe("not_finite");
    expect(time.where.field).toBe("t");
  });

  it("a value outside its kind or range, and an unknown enum value", () => {
    const kind = recordingFailure(() => parseRecording(file('{"t":0,"v":{"elec.master":"on"}}')));
    expect(kind.code).toBe("wrong_kind");
    expect(kind.message).toBe('line 2, field v, channel "elec.master": "on" is not true or false');

    const range = recordingFailure(() => parseRecording(file('{"t":0,"v":{"alt.baro_ft":51000}}')));
    expect(range.code).toBe("out_of_range");
    expect(range.why).toBe("51000 is above the channel's maximum 50000");

    const named = recordingFailure(() => parseRecording(file('{"t":0,"v":{"gear.handle":"TRANSIT"}}')));
    expect(named.code).toBe("unknown_enum_value");
    expect(named.why).toBe('"TRANSIT" is not one of UP, DOWN');

    const long = recordingFailure(() => parseRecording(file('{"t":0,"v":{"xpdr.code":"12345"}}')));
    expect(long.code).toBe("out_of_range");
  });

  it("a channel missing from the header", () => {
    const error = recordingFailure(() => parseRecording(file('{"t":0,"v":{"flaps.position_deg":10}}')));
    expect(error.code).toBe("unknown_channel");
    expect(error.message).toBe('line 2, field v, channel "flaps.position_deg": this channel is not in the header');
  });

  it("badly shaped frames", () => {
    const cases: [string, string, string | undefined][] = [
      ['{"t":-5,"v":{}}', "invalid_frame", "t"],
      ['{"t":1.5,"v":{}}', "invalid_frame", "t"],
      ['{"t":"0","v":{}}', "invalid_frame", "t"],
      ['{"t":0}', "invalid_frame", "v"],
      ['{"t":0,"v":[]}', "invalid_frame", "v"],
      ['{"t":0,"v":{},"extra":1}', "invalid_frame", "extra"],
      ["[0,{}]", "invalid_frame", undefined],
    ];
    for (const [line, code, field] of cases) {
      const error = recordingFailure(() => parseRecording(file(line)));
      expect(error.code, line).toBe(code);
      expect(error.where.field, line).toBe(field);
      expect(error.where.line, line).toBe(2);
    }
  });

  it("a frame after the header's durationMs", () => {
    const header = JSON.stringify({ ...testHeader, durationMs: 1000 });
    const error = recordingFailure(() => parseRecording(`${header}\n{"t":1001,"v":{"elec.master":true}}\n`));
    expect(error.code).toBe("invalid_frame");
    expect(error.why).toBe("time 1001 ms is after the header's durationMs 1000");
  });

  it("an empty file, and a header with no frames", () => {
    for (const text of ["", "\n\n", "   \r\n"]) {
      const error = recordingFailure(() => parseRecording(text));
      expect(error.code).toBe("empty_file");
      expect(error.message).toBe("the file is empty");
    }
    expect(recordingFailure(() => parseRecording(new Uint8Array(0))).code).toBe("empty_file");
    const headerOnly = recordingFailure(() => parseRecording(`${headerLine}\n`));
    expect(headerOnly.code).toBe("no_frames");
  });

  it("a file over the size limit, counted in UTF-8 bytes as fed", () => {
    expect(DEFAULT_MAX_BYTES).toBe(512 * 1024 * 1024);
    const text = file('{"t":0,"v":{"xpdr.code":"ÄÖÜ"}}');
    const bytes = encoder.encode(text).length;
    expect(utf8ByteLength(text)).toBe(bytes);
    expect(parseRecording(text, { maxBytes: bytes }).frames).toHaveLength(1);
    const error = recordingFailure(() => parseRecording(text, { maxBytes: bytes - 1 }));
    expect(error.code).toBe("too_large");
    expect(error.why).toBe(`the file is over the size limit of ${bytes - 1} bytes`);
    // The limit stops the parser before it reads past it, chunk by chunk.
    const parser = new RecordingParser({ maxBytes: 10 });
    parser.push("0123456789");
    expect(recordingFailure(() => parser.push("x")).code).toBe("too_large");
  });

  it("bytes that are not UTF-8", () => {
    const bad = new Uint8Array([...encoder.encode(`${headerLine}\n{"t":0,"v":{"xpdr.code":"`), 0xff, 0xfe, ...encoder.encode('"}}\n')]);
    const error = recordingFailure(() => parseRecording(bad));
    expect(error.code).toBe("not_utf8");
  });

  it("truncated or damaged gzip", () => {
    const packed = gzipSync(encoder.encode(sample.repeat(1)));
    for (const cut of [packed.length - 1, packed.length - 6, Math.floor(packed.length / 2), 12, 5]) {
      const error = recordingFailure(() => parseRecording(packed.slice(0, cut)));
      expect(error.code, `cut at ${cut}`).toBe("truncated_gzip");
    }
    const damaged = packed.slice();
    damaged[damaged.length - 6] ^= 0xff;
    expect(recordingFailure(() => parseRecording(damaged)).code).toBe("truncated_gzip");
  });

  it("checks the gzip trailer with CRC-32/ISO-HDLC", () => {
    // Check value from the Catalogue of parametrised CRC algorithms (reveng), CRC-32/ISO-HDLC.
    const check = encoder.encode("123456789");
    expect(crc32(check)).toBe(0xcbf43926);
    // Reference library from the registry (`crc`), on arbitrary bytes and in two pieces.
    const bytes = encoder.encode(sample);
    expect(crc32(bytes)).toBe(referenceCrc32(Buffer.from(bytes)));
    expect(crc32(bytes.slice(100), crc32(bytes.slice(0, 100)))).toBe(referenceCrc32(Buffer.from(bytes)));
  });
});

describe("writer", () => {
  it("writes a file that parses back to the same header and frames", () => {
    const text = writeRecording(testHeader, sampleFrames);
    expect(text.split("\n")).toHaveLength(sampleFrames.length + 2);
    expect(text.endsWith("\n")).toBe(true);
    expect(parseRecording(text)).toEqual({ header: testHeader, frames: sampleFrames });
  });

  it("refuses to write NaN or infinity rather than writing null", () => {
    expect(recordingFailure(() => serializeFrame({ t: 0, v: { "alt.baro_ft": Number.NaN } })).code).toBe("not_finite");
    expect(recordingFailure(() => serializeFrame({ t: -1, v: {} })).code).toBe("invalid_frame");
  });

  it("encodes then parses any recording to the same values, cut anywhere (fast-check)", () => {
    const kinds = fc.constantFrom("number", "boolean", "enum", "text");
    const recording = fc
      .array(kinds, { minLength: 1, maxLength: 6 })
      .chain((channelKinds) => {
        const channels: ChannelDefinition[] = channelKinds.map((kind, i) =>
          kind === "enum" ? { name: `c.k${i}`, kind, values: ["OFF", "ON", "AUTO", "TEST"] } : ({ name: `c.k${i}`, kind } as ChannelDefinition),
        );
        const valueOf = (c: ChannelDefinition): fc.Arbitrary<ChannelValue> =>
          c.kind === "number"
            ? fc.double({ noNaN: true, noDefaultInfinity: true }).filter((n) => !Object.is(n, -0))
            : c.kind === "boolean"
              ? fc.boolean()
              : c.kind === "enum"
                ? fc.constantFrom(...c.values)
                : fc.string({ unit: "binary", maxLength: 20 });
        const frame = fc.tuple(fc.integer({ min: 1, max: 10_000 }), fc.tuple(...channels.map((c) => fc.option(valueOf(c)))));
        return fc.tuple(fc.constant(channels), fc.array(frame, { minLength: 1, maxLength: 30 }), fc.nat());
      })
      .map(([channels, rawFrames, cutSeed]) => {
        // Keep only real changes, as the format requires: a frame holds what changed.
        const state = new Map<string, ChannelValue>();
        const frames: Frame[] = [];
        let t = 0;
        for (const [dt, values] of rawFrames) {
          t += dt;
          const v: Record<string, ChannelValue> = {};
          values.forEach((value, i) => {
            if (value === null) return;
            const name = channels[i].name;
            if (!state.has(name) || !Object.is(state.get(name), value)) v[name] = value;
          });
          if (Object.keys(v).length === 0) continue;
          for (const [k, value] of Object.entries(v)) state.set(k, value);
          frames.push({ t, v });
        }
        return { channels, frames, cutSeed };
      })
      // A header with no frames is refused on purpose (an empty recording); see the bad-input tests.
      .filter((r) => r.frames.length > 0);
    fc.assert(
      fc.property(recording, ({ channels, frames, cutSeed }) => {
        const header: RecordingHeader = { format: "panelproof-recording", version: 1, airframe: "property rig", channels };
        const text = writeRecording(header, frames);
        const cut = cutSeed % (text.length + 1);
        const parsed = parseRecording([text.slice(0, cut), text.slice(cut)]);
        expect(parsed.header).toEqual(header);
        expect(parsed.frames).toEqual(frames);
      }),
      { numRuns: 200 },
    );
  });

  it("round-trips randomly generated recordings (seeded property test, 150 cases)", () => {
    const random = seedrandom("panelproof-round-trip");
    const pick = <T>(items: readonly T[]): T => items[Math.floor(random() * items.length)];
    for (let run = 0; run < 150; run++) {
      const channels: ChannelDefinition[] = [];
      const channelCount = 1 + Math.floor(random() * 6);
      for (let i = 0; i < channelCount; i++) {
        const name = `ch${run}.c${i}`;
        const kind = pick(["number", "boolean", "enum", "text"] as const);
        if (kind === "number") channels.push({ name, kind, unit: pick(["ft", "kt", "%", "deg"]), min: -1e6, max: 1e6 });
        else if (kind === "enum") channels.push({ name, kind, values: ["OFF", "ON", "AUTO", "TEST"] });
        else if (kind === "text") channels.push({ name, kind });
        else channels.push({ name, kind });
      }
      const valueFor = (channel: ChannelDefinition): ChannelValue => {
        switch (channel.kind) {
          case "number":
            return pick([0, 1, -1, 0.1, 1e-7, 123456.789, random() * 2e6 - 1e6]);
          case "boolean":
            return random() < 0.5;
          case "enum":
            return pick(channel.values);
          case "text":
            return pick(["", "7000", 'quote " and \\ slash', "Ünïcödé ✈", "line\nbreak", "\u0000\u001f"]);
        }
      };
      const header: RecordingHeader = { format: "panelproof-recording", version: 1, airframe: `rig ${run}`, channels };
      const frames: Frame[] = [];
      const state = new Map<string, ChannelValue>();
      let t = Math.floor(random() * 1000);
      const frameCount = 1 + Math.floor(random() * 40);
      for (let f = 0; f < frameCount; f++) {
        const v: Record<string, ChannelValue> = {};
        for (const channel of channels) {
          if (f > 0 && random() < 0.5) continue;
          const value = valueFor(channel);
          if (state.get(channel.name) !== value) v[channel.name] = value;
        }
        if (Object.keys(v).length === 0) continue;
        for (const [k, value] of Object.entries(v)) state.set(k, value);
        frames.push({ t, v });
        t += 1 + Math.floor(random() * 5000);
      }
      const text = writeRecording(header, frames);
      const cut = Math.floor(random() * text.length);
      const parsed = parseRecording([text.slice(0, cut), text.slice(cut)]);
      expect(parsed.header).toEqual(header);
      expect(parsed.frames).toEqual(frames);
    }
  });
});
