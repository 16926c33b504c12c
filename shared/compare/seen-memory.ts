/**
 * How much of a panel's reports a judge keeps. A judge holding `keep` reports judges up to the
 * newest (reports of one element come in time order, so none earlier can still arrive); every
 * advance forgets the reports behind the one held at the cursor once `forgetAfter()` of them pile
 * up. An hour of one pointer is 72,000 reports: kept whole, they were copied and marked by the
 * garbage collector again and again (DEVELOPERS.md, "Runs"). Advancing at any instant gives the
 * same result as at the end; a property test compares the two with `keep` varied.
 */
export const seenMemory = { keep: 4096 };

/**
 * Consumed reports a judge lets pile up before it forgets them: a few, so that in a live run a
 * report object dies young (a young collection copies every report still held, and a report
 * held for a second is copied into the old generation, where only a full collection frees it).
 * Judges forget only when the consumed reports are at least half of what they hold
 * (`shouldForget`), so forgetting stays cheap when many unread reports wait (offline judging).
 */
export const forgetAfter = () => Math.max(1, Math.min(8, seenMemory.keep >> 2));

/** True when `consumed` of `held` reports should be forgotten now. */
export const shouldForget = (consumed: number, held: number) => consumed >= forgetAfter() && consumed * 2 >= held;

/** Drops the first `count` items of `list` in place, making no new array (splice returns one). */
export function forgetFront(list: unknown[], count: number): void {
  list.copyWithin(0, count);
  list.length -= count;
}
