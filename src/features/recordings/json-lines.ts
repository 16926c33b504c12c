import { formatPath } from "../../../shared/recording/errors";

/**
 * Finds where a JSON path (`tracks[0].steps[3].ramp.to`, `initial["gear.handle"]`) sits in the
 * JSON text, so the scenario editor can point at the line as well as the path. A small scanner
 * records the position of every value and every object key under its path, formatted exactly as
 * shared/recording's messages format paths. Malformed text gives the line and column where
 * scanning stopped.
 */

export interface TextPlace {
  /** 1-based, as editors count. */
  line: number;
  column: number;
  offset: number;
}

export interface JsonPlaces {
  places: Map<string, TextPlace>;
  /** Set when the text is not valid JSON: where it went wrong. */
  malformedAt: TextPlace | null;
}

class Stop extends Error {}

export function placeOf(text: string, offset: number): TextPlace {
  let line = 1;
  let lineStart = 0;
  for (let i = 0; i < offset && i < text.length; i++) {
    if (text.charCodeAt(i) === 10) {
      line++;
      lineStart = i + 1;
    }
  }
  return { line, column: offset - lineStart + 1, offset };
}

export function scanJsonPlaces(text: string): JsonPlaces {
  const offsets = new Map<string, number>();
  let i = 0;
  const ws = () => {
    while (i < text.length && /\s/.test(text[i])) i++;
  };
  const fail = (): never => {
    throw new Stop();
  };
  const str = (): string => {
    if (text[i] !== '"') fail();
    const start = i;
    i++;
    while (i < text.length && text[i] !== '"') i += text[i] === "\\" ? 2 : 1;
    if (i >= text.length) fail();
    i++;
    try {
      return JSON.parse(text.slice(start, i)) as string;
    } catch {
      return fail();
    }
  };
  const value = (path: PropertyKey[]) => {
    ws();
    const key = formatPath(path);
    if (!offsets.has(key)) offsets.set(key, i);
    const c = text[i];
    if (c === "{") {
      i++;
      ws();
      if (text[i] === "}") return void i++;
      for (;;) {
        ws();
        const keyAt = i;
        const k = str();
        // A key's own place (for "unknown field" issues), unless its value is found later.
        offsets.set(formatPath([...path, k]), keyAt);
        ws();
        if (text[i] !== ":") fail();
        i++;
        value([...path, k]);
        ws();
        if (text[i] === ",") {
          i++;
          continue;
        }
        if (text[i] === "}") return void i++;
        fail();
      }
    }
    if (c === "[") {
      i++;
      ws();
      if (text[i] === "]") return void i++;
      for (let n = 0; ; n++) {
        value([...path, n]);
        ws();
        if (text[i] === ",") {
          i++;
          continue;
        }
        if (text[i] === "]") return void i++;
        fail();
      }
    }
    if (c === '"') return void str();
    const m = /^(-?\d+(\.\d+)?([eE][+-]?\d+)?|true|false|null)/.exec(text.slice(i, i + 64));
    if (!m) fail();
    i += m![0].length;
  };
  try {
    value([]);
    ws();
    if (i < text.length) fail();
    return { places: new Map([...offsets].map(([k, o]) => [k, placeOf(text, o)])), malformedAt: null };
  } catch (error) {
    if (!(error instanceof Stop)) throw error;
    return { places: new Map([...offsets].map(([k, o]) => [k, placeOf(text, o)])), malformedAt: placeOf(text, Math.min(i, text.length)) };
  }
}

/** The place of a path, or of its nearest ancestor that is in the text (a missing field points at its object). */
export function findPlace(places: Map<string, TextPlace>, path: string): TextPlace | null {
  let p = path;
  for (;;) {
    const hit = places.get(p);
    if (hit) return hit;
    if (!p) return null;
    p = parentPath(p);
  }
}

/** `tracks[0].steps[3].ramp.to` → `tracks[0].steps[3].ramp`; `initial["a.b"]` → `initial`; `tracks[0]` → `tracks`. */
export function parentPath(path: string): string {
  if (path.endsWith("]")) {
    // Skip back over a bracket, which may hold a quoted key with dots or brackets inside.
    if (path.endsWith('"]')) {
      const open = path.lastIndexOf('["');
      return open >= 0 ? path.slice(0, open) : "";
    }
    const open = path.lastIndexOf("[");
    return open >= 0 ? path.slice(0, open) : "";
  }
  const dot = path.lastIndexOf(".");
  const bracket = path.lastIndexOf("]");
  if (dot > bracket) return path.slice(0, dot);
  return bracket >= 0 ? path.slice(0, bracket + 1) : "";
}
