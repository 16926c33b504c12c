/**
 * How much of a panel's reports a judge keeps. A judge holding `keep` reports judges up to the
 * newest (reports of one element come in time order, so none earlier can still arrive); every
 * advance forgets the reports behind the one held at the cursor once `forgetAfter()` of them pile
 * up. An hour of one pointer is 72,000 reports: kept whole, they were copied and marked by the
 * garbage collector again and again (DEVELOPERS.md, "Runs"). Advancing at any instant gives the
 * same result as at the end; a property test compares the two with `keep` varied.
 */
export const seenMemory = { keep: 4096 };

/** Consumed reports a judge lets pile up before it forgets them: a quarter of what it holds. */
export const forgetAfter = () => Math.max(1, seenMemory.keep >> 2);
