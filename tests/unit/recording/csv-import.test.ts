import { describe, expect, it } from "vitest";
import type { ChannelDefinition } from "../../../shared/recording/channels";
import { CsvImporter, importCsv, parseDecimal, type CsvImportOptions } from "../../../shared/recording/csv-import";
import { recordingFailure } from "./helpers";

const catalogue: ChannelDefinition[] = [
  { name: "alt.baro_ft", kind: "number", unit: "ft", min: -1000, max: 50000 },
  { name: "gear.handle", kind: "enum", values: ["UP", "DOWN"] },
  { name: "elec.master", kind: "boolean" },
  { name: "xpdr.code", kind: "text", maxLength: 8 },
];

const point: CsvImportOptions = { delimiter: ",", decimalMark: ".", channels: catalogue };
const comma: CsvImportOptions = { delimiter: ";", decimalMark: ",", channels: catalogue };

const wide = [
  "time_ms,alt.baro_ft [ft],gear.handle,elec.master",
  "0,250,DOWN,false",
  "100,250.5,DOWN,true",
  "200,,UP,",
  "300,251,UP,1",
  "",
].join("\n");

describe("CSV import", () => {
  it("turns wide rows into frames of changed values; empty cells carry no value", () => {
    const result = importCsv(wide, point);
    expect(result.channels.map((c) => c.name)).toEqual(["alt.baro_ft", "gear.handle", "elec.master"]);
    expect(result.drafts).toEqual([]);
    expect(result.frames).toEqual([
      { t: 0, v: { "alt.baro_ft": 250, "gear.handle": "DOWN", "elec.master": false } },
      { t: 100, v: { "alt.baro_ft": 250.5, "elec.master": true } },
      { t: 200, v: { "gear.handle": "UP" } },
      { t: 300, v: { "alt.baro_ft": 251 } },
    ]);
  });

  it("reads a decimal comma with ';' and a time column in seconds", () => {
    const text = "time [s];alt.baro_ft\n0;1234,5\n0,25;1240\n1,5;-12,75\n";
    expect(importCsv(text, comma).frames).toEqual([
      { t: 0, v: { "alt.baro_ft": 1234.5 } },
      { t: 250, v: { "alt.baro_ft": 1240 } },
      { t: 1500, v: { "alt.baro_ft": -12.75 } },
    ]);
    const chosen = importCsv("t;alt.baro_ft\n0,001;1\n", { ...comma, timeUnit: "s" });
    expect(chosen.frames).toEqual([{ t: 1, v: { "alt.baro_ft": 1 } }]);
  });

  it("gives the same frames whatever the chunking, with CRLF and quoted fields", () => {
    const text =
      'time,xpdr.code,gear.handle\r\n0,"12""34",DOWN\r\n10,"a,b",UP\r\n20,"a\r\nb",UP\r\n30,"",DOWN\r\n';
    const whole = importCsv(text, point).frames;
    expect(whole).toEqual([
      { t: 0, v: { "xpdr.code": '12"34', "gear.handle": "DOWN" } },
      { t: 10, v: { "xpdr.code": "a,b", "gear.handle": "UP" } },
      { t: 20, v: { "xpdr.code": "a\r\nb" } },
      // An empty cell carries no value, quoted or not.
      { t: 30, v: { "gear.handle": "DOWN" } },
    ]);
    for (let cut = 1; cut < text.length; cut++) {
      expect(importCsv([text.slice(0, cut), text.slice(cut)], point).frames, `cut at ${cut}`).toEqual(whole);
    }
    expect(importCsv(Array.from(text), point).frames).toEqual(whole);
  });

  it("takes units from the header or from the import, and refuses a unit that disagrees with the catalogue", () => {
    const catalogueWithoutUnit: ChannelDefinition[] = [{ name: "ias_kt", kind: "number" }];
    const given = importCsv("t,ias_kt\n0,120\n", { ...point, channels: catalogueWithoutUnit, units: { ias_kt: "kt" } });
    expect(given.frames).toEqual([{ t: 0, v: { ias_kt: 120 } }]);

    const error = recordingFailure(() => importCsv("t,alt.baro_ft [m]\n0,100\n", point));
    expect(error.code).toBe("csv_unit");
    expect(error.where).toEqual({ row: 1, column: 2, field: "alt.baro_ft [m]", channel: "alt.baro_ft" });
    expect(error.why).toContain("the column is in m but the channel is in ft");

    const atImport = recordingFailure(() => importCsv("t,alt.baro_ft\n0,100\n", { ...point, units: { "alt.baro_ft": "m" } }));
    expect(atImport.code).toBe("csv_unit");

    const timeUnit = recordingFailure(() => importCsv("t [min],alt.baro_ft\n0,100\n", point));
    expect(timeUnit.code).toBe("csv_unit");
  });

  it("detects a wrong delimiter and says which one the header uses", () => {
    const error = recordingFailure(() => importCsv("time;alt.baro_ft;gear.handle\n0;1;UP\n", point));
    expect(error.code).toBe("csv_delimiter");
    expect(error.message).toBe(
      "row 1: only one column found with delimiter ',', but the header contains ';': choose ';' as the delimiter",
    );
    const tab = recordingFailure(() => importCsv("time\talt.baro_ft\n0\t1\n", comma));
    expect(tab.why).toContain("choose tab as the delimiter");

    const lonely = recordingFailure(() => importCsv("time\n0\n", point));
    expect(lonely.code).toBe("csv_header");
  });

  it("refuses a decimal comma with a comma delimiter before reading anything", () => {
    const error = recordingFailure(() => new CsvImporter({ delimiter: ",", decimalMark: ",", channels: catalogue }));
    expect(error.code).toBe("csv_options");
  });

  it("names row, column and channel for a bad value", () => {
    const mark = recordingFailure(() => importCsv("t;alt.baro_ft\n0;100\n10;12,5\n", { ...point, delimiter: ";" }));
    expect(mark.code).toBe("wrong_kind");
    expect(mark.where).toEqual({ row: 3, column: 2, field: "alt.baro_ft", channel: "alt.baro_ft" });
    expect(mark.why).toBe("\"12,5\" is not a number: it uses ',' but the decimal mark chosen is '.'");

    const nan = recordingFailure(() => importCsv("t,alt.baro_ft\n0,NaN\n", point));
    expect(nan.code).toBe("not_finite");
    const inf = recordingFailure(() => importCsv("t,alt.baro_ft\n0,1e999\n", point));
    expect(inf.code).toBe("not_finite");

    const range = recordingFailure(() => importCsv("t,alt.baro_ft\n0,60000\n", point));
    expect(range.code).toBe("out_of_range");

    const named = recordingFailure(() => importCsv("t,gear.handle\n0,UP\n5,TRANSIT\n", point));
    expect(named.code).toBe("unknown_enum_value");
    expect(named.message).toBe('row 3, column 2, field gear.handle, channel "gear.handle": "TRANSIT" is not one of UP, DOWN');

    const bool = recordingFailure(() => importCsv("t,elec.master\n0,yes\n", point));
    expect(bool.code).toBe("wrong_kind");
  });

  it("counts rows as file lines, also after a quoted field spanning lines", () => {
    const error = recordingFailure(() => importCsv('t,xpdr.code,gear.handle\n0,"a\nb",UP\n5,x,SIDEWAYS\n', point));
    expect(error.where.row).toBe(4);
  });

  it("refuses rows with the wrong number of fields, and bad times", () => {
    const fields = recordingFailure(() => importCsv("t,alt.baro_ft,gear.handle\n0,1,UP\n5,2\n", point));
    expect(fields.code).toBe("csv_row");
    expect(fields.message).toBe("row 3: the row has 2 fields, the header has 3");

    const backwards = recordingFailure(() => importCsv("t,alt.baro_ft\n10,1\n5,2\n", point));
    expect(backwards.code).toBe("time_backwards");
    expect(backwards.where.row).toBe(3);

    const conflict = recordingFailure(() => importCsv("t,alt.baro_ft\n10,1\n10,2\n", point));
    expect(conflict.code).toBe("conflicting_duplicate");

    const empty = recordingFailure(() => importCsv("t,alt.baro_ft\n,1\n", point));
    expect(empty.where).toEqual({ row: 2, column: 1, field: "time" });

    const negative = recordingFailure(() => importCsv("t,alt.baro_ft\n-1,1\n", point));
    expect(negative.code).toBe("csv_row");

    const quote = recordingFailure(() => importCsv('t,xpdr.code\n0,"abc\n', point));
    expect(quote.why).toBe("a quoted field is never closed");
  });

  it("refuses unknown columns by default, or adds them as drafts with a guessed kind", () => {
    const text = "t,flaps.position_deg [deg],fire.eng1,ann.text,gear.handle\n0,,true,hello,UP\n10,12.5,false,bye,DOWN\n";
    const error = recordingFailure(() => importCsv(text, point));
    expect(error.code).toBe("unknown_channel");
    expect(error.where.channel).toBe("flaps.position_deg");

    const result = importCsv(text, { ...point, unknownColumns: "draft" });
    expect(result.drafts).toEqual([
      { name: "flaps.position_deg", kind: "number", unit: "deg", draft: true, description: "first seen in a CSV import" },
      { name: "fire.eng1", kind: "boolean", draft: true, description: "first seen in a CSV import" },
      { name: "ann.text", kind: "text", draft: true, description: "first seen in a CSV import" },
    ]);
    expect(result.frames[1]).toEqual({
      t: 10,
      v: { "flaps.position_deg": 12.5, "fire.eng1": false, "ann.text": "bye", "gear.handle": "DOWN" },
    });
  });

  it("refuses header cells that are not channel names, and repeated columns", () => {
    const name = recordingFailure(() => importCsv("t,Altitude Baro\n0,1\n", point));
    expect(name.code).toBe("csv_header");
    expect(name.where).toEqual({ row: 1, column: 2, field: "Altitude Baro" });
    const twice = recordingFailure(() => importCsv("t,alt.baro_ft,alt.baro_ft [ft]\n0,1,1\n", point));
    expect(twice.why).toBe("channel alt.baro_ft already has column 2");
  });

  it("an empty file, a header with no rows, and the size limit", () => {
    expect(recordingFailure(() => importCsv("", point)).code).toBe("empty_file");
    expect(recordingFailure(() => importCsv("\n\n", point)).code).toBe("empty_file");
    expect(recordingFailure(() => importCsv("t,alt.baro_ft\n", point)).code).toBe("no_frames");
    expect(recordingFailure(() => importCsv(wide, { ...point, maxBytes: 20 })).code).toBe("too_large");
  });

  it("reads numbers strictly by the chosen decimal mark", () => {
    expect(parseDecimal(" 1.5e3 ", ".")).toEqual({ value: 1500 });
    expect(parseDecimal("-0,25", ",")).toEqual({ value: -0.25 });
    expect(parseDecimal("1.5", ",")).toMatchObject({ code: "wrong_kind" });
    expect(parseDecimal("1 000", ".")).toMatchObject({ code: "wrong_kind" });
    expect(parseDecimal("inf", ".")).toMatchObject({ code: "not_finite" });
  });
});
