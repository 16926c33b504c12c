import fc from "fast-check";
import { quantileSorted } from "simple-statistics";
import { describe, expect, it } from "vitest";
import { seenMemory } from "../../../shared/compare/seen-memory";
import { ElementJudge, RunJudge, judgeOffline, judgeOfflineInTurns } from "../../../shared/compare/judge";
import { quantileOfSorted } from "../../../shared/compare/statistics";
import type { SeenSample, Tolerances } from "../../../shared/compare/types";
import type { ElementTimeline, ExpectedTimelines, LampShows } from "../../../shared/expect/types";

const TOL: Tolerances = { degrees: 2, level: 24, period: 0.2, lagBudgetMs: 150 };
const ON: LampShows = { state: "on", level: 255 };
const OFF: LampShows = { state: "off" };

function lampTimeline(changes: { t: number; shows: LampShows }[], id = "fire-lamp"): ElementTimeline {
  return { id, kind: "lamp", label: "FIRE", placeholder: false, tracks: { lamp: changes } };
}

function judgeLamp(tl: ElementTimeline, seen: [number, LampShows][], end = 5000, tol = TOL) {
  const judge = new ElementJudge(tl, tol, 0);
  for (const [t, lamp] of seen) judge.addSeen({ t, shows: { track: "lamp", lamp } });
  return judge.finish(end, tl.placeholder);
}

const fireLamp = lampTimeline([{ t: 0, shows: OFF }, { t: 1000, shows: ON }, { t: 3000, shows: OFF }]);

describe("judging a lamp", () => {
  it("passes a lamp that follows within its lag budget, and measures the lag", () => {
    const r = judgeLamp(fireLamp, [[0, OFF], [1050, ON], [3080, OFF]]);
    expect(r.status).toBe("pass");
    expect(r.mismatches).toEqual([]);
    // Two changes followed, 50 and 80 ms after (type 7 quantiles: 65 and 78.5).
    expect(r.lag).toEqual({ count: 2, p50: 65, p95: 78.5, max: 80 });
  });

  it("reports a lamp stuck off as one wrong-value mismatch with its interval", () => {
    const r = judgeLamp(fireLamp, [[0, OFF]]);
    expect(r.status).toBe("fail");
    expect(r.mismatches).toEqual([
      { elementId: "fire-lamp", track: "lamp", kind: "wrong_value", startMs: 1000, endMs: 3000, worstError: 2000, expected: "on", seen: "off", atMs: 1000 },
    ]);
  });

  it("calls a lamp that follows after its lag budget late", () => {
    const r = judgeLamp(fireLamp, [[0, OFF], [1400, ON], [3000, OFF]]);
    expect(r.mismatches).toHaveLength(1);
    expect(r.mismatches[0]).toMatchObject({ kind: "late", startMs: 1000, endMs: 1400, worstError: 400 });
  });

  it("judges flashing as a state with a period tolerance, from a panel that reports on and off", () => {
    const flashing = lampTimeline([{ t: 0, shows: OFF }, { t: 1000, shows: { state: "flashing", periodMs: 500, level: 255 } }, { t: 3000, shows: OFF }]);
    const toggles = (half: number): [number, LampShows][] => {
      const out: [number, LampShows][] = [[0, OFF]];
      for (let t = 1000, on = true; t < 3000; t += half, on = !on) out.push([t, on ? ON : OFF]);
      out.push([3000, OFF]);
      return out;
    };
    expect(judgeLamp(flashing, toggles(250)).status).toBe("pass"); // 500 ms period
    expect(judgeLamp(flashing, toggles(270)).status).toBe("pass"); // 540 ms: within 20 %
    const tooFast = judgeLamp(flashing, toggles(100)); // 200 ms period: a different flash
    expect(tooFast.status).toBe("fail");
    expect(tooFast.mismatches[0]).toMatchObject({ startMs: 1000, expected: "flashing every 500 ms" });
    // A panel that reports the state itself is judged the same way.
    expect(judgeLamp(flashing, [[0, OFF], [1020, { state: "flashing", periodMs: 0, level: 255 }], [3010, OFF]]).status).toBe("pass");
  });

  it("tells no data from a pass, untested from a pass, and never judges a placeholder", () => {
    expect(judgeLamp(fireLamp, []).status).toBe("no_data");
    const steady = lampTimeline([{ t: 0, shows: OFF }]);
    expect(judgeLamp(steady, [[0, OFF]]).status).toBe("untested");
    expect(judgeLamp({ ...fireLamp, placeholder: true }, [[0, OFF]]).status).toBe("placeholder");
  });

  it("gives no verdict inside a link gap, and says how long it lasted", () => {
    const judge = new ElementJudge(fireLamp, TOL, 0);
    judge.addGap({ fromMs: 900, toMs: 3500 });
    judge.addSeen({ t: 0, shows: { track: "lamp", lamp: OFF } });
    judge.addSeen({ t: 3500, shows: { track: "lamp", lamp: OFF } });
    const r = judge.finish(5000, false);
    expect(r.mismatches).toEqual([]);
    expect(r.noDataMs).toBe(2600);
    expect(r.status).toBe("no_data");
  });
});

describe("after a link gap", () => {
  it("a report from before the gap does not count again once the link is back", () => {
    const judge = new ElementJudge(fireLamp, TOL, 0);
    judge.addGap({ fromMs: 500, toMs: 900 });
    judge.addSeen({ t: 0, shows: { track: "lamp", lamp: OFF } });
    judge.addSeen({ t: 2000, shows: { track: "lamp", lamp: ON } });
    judge.addSeen({ t: 3000, shows: { track: "lamp", lamp: OFF } });
    const r = judge.finish(5000, false);
    // No data from 500 ms (the gap) until the first report after it at 2,000 ms: never "stuck off".
    expect(r.noDataMs).toBe(1500);
    expect(r.mismatches).toEqual([]);
  });

  it("the same holds for a pointer", () => {
    const needle: ElementTimeline = { id: "n", kind: "pointer", label: "N", placeholder: false, tracks: {}, angle: { t: [0, 1000, 3000], angle: [0, 0, 100], wrap: false } };
    const judge = new ElementJudge(needle, { ...TOL, lagBudgetMs: 300 }, 0);
    judge.addGap({ fromMs: 500, toMs: 900 });
    judge.addSeen({ t: 0, shows: { track: "angle", angle: 0 } });
    judge.addSeen({ t: 3000, shows: { track: "angle", angle: 100 } });
    const r = judge.finish(4000, false);
    expect(r.mismatches).toEqual([]);
    expect(r.noDataMs).toBe(2500);
  });
});

describe("judging a pointer", () => {
  const ramp = (wrap = false): ElementTimeline => ({
    id: "airspeed",
    kind: "pointer",
    label: "Airspeed",
    placeholder: false,
    tracks: {},
    angle: { t: [0, 1000, 4000], angle: [0, 90, 90], wrap },
  });

  it("absorbs the staleness between reports within the lag budget", () => {
    const judge = new ElementJudge(ramp(), { ...TOL, lagBudgetMs: 300 }, 0);
    for (let t = 0; t <= 4000; t += 100) judge.addSeen({ t, shows: { track: "angle", angle: Math.min(90, t * 0.09) } });
    expect(judge.finish(4000, false).status).toBe("pass");
  });

  it("reports a fault of known size and duration with that size and duration", () => {
    fc.assert(
      fc.property(fc.integer({ min: 3, max: 170 }), fc.integer({ min: 110, max: 200 }), fc.integer({ min: 40, max: 150 }), (offset, start10, length10) => {
        const start = start10 * 10;
        const length = length10 * 10;
        const judge = new ElementJudge(ramp(), { ...TOL, lagBudgetMs: 300 }, 0);
        // Reports at 10 ms, exact, except an offset during [start, start + length).
        for (let t = 0; t <= 4000; t += 10) {
          const exact = Math.min(90, t * 0.09);
          judge.addSeen({ t, shows: { track: "angle", angle: t >= start && t < start + length ? exact + offset : exact } });
        }
        const r = judge.finish(4000, false);
        expect(r.mismatches).toHaveLength(1);
        expect(r.mismatches[0].startMs).toBe(start);
        expect(r.mismatches[0].endMs).toBe(start + length);
        expect(r.mismatches[0].worstError).toBeCloseTo(offset, 6);
      }),
      { numRuns: 60 },
    );
  });

  it("compares full-circle pointers on the shortest arc", () => {
    const needle: ElementTimeline = { id: "alt-100", kind: "pointer", label: "Altimeter 100 ft", placeholder: false, tracks: {}, angle: { t: [0], angle: [719], wrap: true } };
    const at = (angle: number) => {
      const judge = new ElementJudge(needle, { ...TOL, lagBudgetMs: 100 }, 0);
      judge.addSeen({ t: 0, shows: { track: "angle", angle } });
      return judge.finish(1000, false);
    };
    expect(at(1).mismatches).toEqual([]); // 359 against 1: two degrees apart across zero
    expect(at(10).mismatches[0].worstError).toBeCloseTo(11, 6);
    expect(at(179).mismatches[0].worstError).toBeCloseTo(180, 6);
  });
});

describe("live judging equals offline judging", () => {
  const timelines: ExpectedTimelines = {
    panelId: "p",
    startMs: 0,
    endMs: 6000,
    elements: [
      fireLamp,
      { id: "fuel-readout", kind: "readout", label: "Fuel", placeholder: false, tracks: { text: [{ t: 0, shows: "0420" }, { t: 2000, shows: "0415" }, { t: 4000, shows: "" }] } },
      { id: "pitot-cb", kind: "breaker", label: "Pitot heat", placeholder: false, tracks: { breaker: [{ t: 0, shows: "in" }, { t: 2500, shows: "tripped" }] } },
      { id: "needle", kind: "pointer", label: "Needle", placeholder: false, tracks: {}, angle: { t: [0, 3000, 6000], angle: [10, 300, 20], wrap: false } },
      // A beacon flashing from 1 s to 4 s, reported as on and off (the flashing detector forgets too).
      lampTimeline([{ t: 0, shows: OFF }, { t: 1000, shows: { state: "flashing", periodMs: 500, level: 255 } }, { t: 4000, shows: OFF }], "beacon"),
    ],
  };
  const tolerances = () => TOL;
  const arbitrarySeen = fc.array(
    fc.record({
      t: fc.integer({ min: 0, max: 6000 }),
      which: fc.integer({ min: 0, max: 3 }),
      lamp: fc.boolean(),
      text: fc.constantFrom("0420", "0415", "", "0410"),
      breaker: fc.constantFrom("in", "pulled", "tripped" as const),
      angle: fc.integer({ min: 0, max: 320 }),
    }),
    { maxLength: 80 },
  );

  function toSamples(raw: any[]): { elementId: string; sample: SeenSample }[] {
    // The beacon's toggles, every 250 ms while it flashes (some jitter), among the random reports.
    const beacon = Array.from({ length: 13 }, (_, k) => ({ t: 1000 + k * 250 + ((k * 37) % 21), which: 4, lamp: k % 2 === 0 && k < 12 }));
    return [...raw, ...beacon]
      .sort((a, b) => a.t - b.t)
      .map((r) => {
        switch (r.which) {
          case 0:
            return { elementId: "fire-lamp", sample: { t: r.t, shows: { track: "lamp", lamp: r.lamp ? ON : OFF } } };
          case 1:
            return { elementId: "fuel-readout", sample: { t: r.t, shows: { track: "text", text: r.text } } };
          case 2:
            return { elementId: "pitot-cb", sample: { t: r.t, shows: { track: "breaker", breaker: r.breaker } } };
          case 4:
            return { elementId: "beacon", sample: { t: r.t, shows: { track: "lamp", lamp: r.lamp ? ON : OFF } } };
          default:
            return { elementId: "needle", sample: { t: r.t, shows: { track: "angle", angle: r.angle } } };
        }
      }) as { elementId: string; sample: SeenSample }[];
  }

  it("whatever the batching, live results equal offline results", () => {
    fc.assert(
      fc.property(arbitrarySeen, fc.array(fc.integer({ min: 0, max: 6000 }), { maxLength: 10 }), (raw, cuts) => {
        const samples = toSamples(raw);
        const offline = judgeOffline(timelines, samples, [], tolerances);
        const live = new RunJudge(timelines, tolerances);
        const stops = [...cuts].sort((a, b) => a - b);
        let i = 0;
        for (const stop of stops) {
          while (i < samples.length && samples[i].sample.t < stop) live.addSeen(samples[i].elementId, samples[i++].sample);
          live.advance(stop);
        }
        while (i < samples.length) live.addSeen(samples[i].elementId, samples[i++].sample);
        expect(live.finish()).toEqual(offline);
      }),
      { numRuns: 150 },
    );
  });

  it("judges that judge as they go and forget old reports give what judges holding them all give, offline and live", () => {
    const setKeep = (n: number) => {
      seenMemory.keep = n;
    };
    fc.assert(
      fc.property(arbitrarySeen, fc.integer({ min: 2, max: 9 }), fc.array(fc.integer({ min: 0, max: 6000 }), { maxLength: 10 }), (raw, keep, cuts) => {
        const samples = toSamples(raw);
        const kept = seenMemory.keep;
        try {
          setKeep(Infinity);
          const holdingAll = judgeOffline(timelines, samples, [], tolerances);
          setKeep(keep);
          expect(judgeOffline(timelines, samples, [], tolerances)).toEqual(holdingAll);
          const live = new RunJudge(timelines, tolerances);
          let i = 0;
          for (const stop of [...cuts].sort((a, b) => a - b)) {
            while (i < samples.length && samples[i].sample.t < stop) live.addSeen(samples[i].elementId, samples[i++].sample);
            live.advance(stop);
          }
          while (i < samples.length) live.addSeen(samples[i].elementId, samples[i++].sample);
          expect(live.finish()).toEqual(holdingAll);
        } finally {
          seenMemory.keep = kept;
        }
      }),
      { numRuns: 200 },
    );
  });

  it("judging in turns gives the same judgement, with turns between slices of reports", async () => {
    fc.assert(
      fc.asyncProperty(arbitrarySeen, async (raw) => {
        const samples = toSamples(raw);
        let turns = 0;
        const inTurns = await judgeOfflineInTurns(timelines, samples, [], tolerances, { sliceMs: 0, turn: async () => void turns++ });
        expect(inTurns).toEqual(judgeOffline(timelines, samples, [], tolerances));
        expect(turns).toBe(Math.floor(samples.length / 1024));
      }),
      { numRuns: 50 },
    );
    // Enough reports for turns: one every 1,024 reports with a zero slice.
    const many = Array.from({ length: 5000 }, (_, i) => ({ elementId: "needle", sample: { t: i, shows: { track: "angle" as const, angle: 10 + (290 * i) / 3000 } } }));
    let turns = 0;
    expect(await judgeOfflineInTurns(timelines, many, [], tolerances, { sliceMs: 0, turn: async () => void turns++ })).toEqual(judgeOffline(timelines, many, [], tolerances));
    expect(turns).toBe(4);
  });

  it("a seen log equal to the expected timeline never mismatches", () => {
    const samples: { elementId: string; sample: SeenSample }[] = [];
    for (const tl of timelines.elements) {
      for (const c of tl.tracks.lamp ?? []) samples.push({ elementId: tl.id, sample: { t: c.t, shows: { track: "lamp", lamp: c.shows } } });
      for (const c of tl.tracks.text ?? []) samples.push({ elementId: tl.id, sample: { t: c.t, shows: { track: "text", text: c.shows } } });
      for (const c of tl.tracks.breaker ?? []) samples.push({ elementId: tl.id, sample: { t: c.t, shows: { track: "breaker", breaker: c.shows } } });
      if (tl.angle) for (let t = 0; t <= 6000; t += 5) samples.push({ elementId: tl.id, sample: { t, shows: { track: "angle", angle: t <= 3000 ? 10 + (290 * t) / 3000 : 300 - (280 * (t - 3000)) / 3000 } } });
    }
    samples.sort((a, b) => a.sample.t - b.sample.t);
    const result = judgeOffline(timelines, samples, [], tolerances);
    expect(result.mismatches).toEqual([]);
    expect(result.counts).toMatchObject({ pass: 5, fail: 0 });
  });

  it("counts reports for unknown elements instead of failing", () => {
    const judge = new RunJudge(timelines, tolerances);
    judge.addSeen("no-such-element", { t: 5, shows: { track: "text", text: "x" } });
    expect(judge.unknownElementReports).toBe(1);
  });
});

describe("lag percentiles", () => {
  it("equal the reference statistics package's on the same samples", () => {
    // Reference: simple-statistics quantileSorted (npm registry), the method our judge uses.
    fc.assert(
      fc.property(fc.array(fc.integer({ min: 0, max: 5000 }), { minLength: 1, maxLength: 200 }), fc.constantFrom(0.5, 0.95, 0.99, 0.1, 1), (values, p) => {
        const sorted = [...values].sort((a, b) => a - b);
        expect(quantileOfSorted(sorted, p)).toBe(quantileSorted(sorted, p));
      }),
    );
  });
});

describe("live mismatches", () => {
  it("come in the order they settled, so a reader keeping its place by count sees each exactly once", () => {
    // Two lamps that each go wrong twice, interleaved: first, second, first, second.
    const expectedOn = (id: string) => lampTimeline([{ t: 0, shows: ON }], id);
    const judge = new RunJudge({ panelId: "p", startMs: 0, endMs: 10_000, elements: [expectedOn("first"), expectedOn("second")] }, () => TOL);
    const wrongFor = (id: string, from: number) => {
      judge.addSeen(id, { t: from, shows: { track: "lamp", lamp: OFF } });
      judge.addSeen(id, { t: from + 500, shows: { track: "lamp", lamp: ON } });
    };
    wrongFor("first", 1000);
    wrongFor("second", 2000);
    wrongFor("first", 3000);
    wrongFor("second", 4000);
    const announced: string[] = [];
    let count = 0;
    for (let t = 0; t <= 6000; t += 250) {
      judge.advance(t);
      const live = judge.liveMismatches();
      for (let i = count; i < live.length; i++) announced.push(`${live[i].elementId}@${live[i].startMs}`);
      count = live.length;
    }
    expect(announced).toEqual(["first@1000", "second@2000", "first@3000", "second@4000"]);
    // And the final judgement holds the same four.
    expect(judge.finish(10_000).mismatches.map((m) => `${m.elementId}@${m.startMs}`)).toEqual(announced);
  });
});

describe("live marking of a mismatch that has not ended", () => {
  it("a lamp stuck dark to the end fails live once it outlasts the lag budget, before any mismatch closes", () => {
    const stuckTimeline: ExpectedTimelines = { panelId: "p", startMs: 0, endMs: 5000, elements: [lampTimeline([{ t: 0, shows: OFF }, { t: 1000, shows: ON }])] };
    const judge = new RunJudge(stuckTimeline, () => TOL);
    judge.addSeen("fire-lamp", { t: 10, shows: { track: "lamp", lamp: OFF } });
    judge.advance(1000 + TOL.lagBudgetMs); // exactly the budget: not yet
    expect(judge.newlyFailing(1000 + TOL.lagBudgetMs)).toEqual([]);
    judge.advance(1400);
    expect(judge.newlyFailing(1400)).toEqual(["fire-lamp"]);
    // Named once: still failing, but a live view has marked it already.
    judge.advance(1500);
    expect(judge.newlyFailing(1500)).toEqual([]);
    expect(judge.liveMismatches()).toEqual([]);
    // The final judgement agrees: one wrong-value mismatch from 1000 to the end.
    const done = judge.finish(5000);
    expect(done.mismatches).toMatchObject([{ elementId: "fire-lamp", kind: "wrong_value", startMs: 1000, endMs: 5000 }]);
  });

  it("a needle that catches up within the budget is never marked", () => {
    const tl: ElementTimeline = { id: "needle", kind: "pointer", label: "needle", placeholder: false, tracks: {}, angle: { t: [0, 1000, 1001], angle: [0, 0, 90], wrap: false } };
    const judge = new RunJudge({ panelId: "p", startMs: 0, endMs: 3000, elements: [tl] }, () => TOL);
    judge.addSeen("needle", { t: 0, shows: { track: "angle", angle: 0 } });
    judge.addSeen("needle", { t: 1100, shows: { track: "angle", angle: 90 } });
    for (let t = 0; t <= 3000; t += 50) {
      judge.advance(t);
      expect(judge.newlyFailing(t)).toEqual([]);
    }
  });
});
