import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { coveredShare, laneBands } from "../../../shared/compare/lane-bands";

describe("timeline lane bands", () => {
  it("keeps intervals apart when they are more than a column apart, and merges closer ones", () => {
    // 10 s over 100 columns: a column is 100 ms.
    const bands = laneBands(
      [
        { startMs: 5000, endMs: 6000 },
        { startMs: 1000, endMs: 2000 },
        { startMs: 2050, endMs: 2500 },
      ],
      0,
      10_000,
      100,
    );
    expect(bands).toEqual([
      { fromMs: 1000, toMs: 2500, count: 2 },
      { fromMs: 5000, toMs: 6000, count: 1 },
    ]);
  });

  it("widens an instant to one column and clips to the span shown", () => {
    expect(laneBands([{ startMs: 300, endMs: 300 }], 0, 1000, 10)).toEqual([{ fromMs: 300, toMs: 400, count: 1 }]);
    expect(laneBands([{ startMs: -50, endMs: 20 }, { startMs: 990, endMs: 2000 }, { startMs: 3000, endMs: 4000 }], 0, 1000, 1000)).toEqual([
      { fromMs: 0, toMs: 20, count: 1 },
      { fromMs: 990, toMs: 1000, count: 1 },
    ]);
  });

  it("draws 10,000 mismatches in at most one band per column, counting every one", () => {
    const many = Array.from({ length: 10_000 }, (_, i) => ({ startMs: i * 360 + (i % 7) * 10, endMs: i * 360 + 200 }));
    const bands = laneBands(many, 0, 3_600_000, 800);
    expect(bands.length).toBeLessThanOrEqual(800);
    expect(bands.reduce((n, b) => n + b.count, 0)).toBe(10_000);
  });

  it("never loses an instant that an interval covers (property)", () => {
    fc.assert(
      fc.property(fc.array(fc.record({ s: fc.integer({ min: 0, max: 9999 }), d: fc.integer({ min: 0, max: 500 }) }), { maxLength: 60 }), fc.integer({ min: 1, max: 400 }), (list, columns) => {
        const intervals = list.map(({ s, d }) => ({ startMs: s, endMs: Math.min(10_000, s + d) }));
        const bands = laneBands(intervals, 0, 10_000, columns);
        for (const i of intervals) expect(bands.some((b) => b.fromMs <= i.startMs && b.toMs >= i.endMs)).toBe(true);
        for (let k = 1; k < bands.length; k++) expect(bands[k].fromMs).toBeGreaterThan(bands[k - 1].toMs);
        expect(bands.reduce((n, b) => n + b.count, 0)).toBe(intervals.length);
      }),
    );
  });
});

describe("covered share", () => {
  it("counts overlaps once and clips to the span", () => {
    expect(coveredShare([{ startMs: 0, endMs: 500 }, { startMs: 250, endMs: 750 }, { startMs: 900, endMs: 2000 }], 0, 1000)).toBe(0.85);
    expect(coveredShare([], 0, 1000)).toBe(0);
    expect(coveredShare([{ startMs: 0, endMs: 10 }], 5, 5)).toBe(0);
  });
});
