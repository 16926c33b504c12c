import type { CSSProperties } from "react";

/**
 * A table laid out and painted only when scrolled near (content-visibility), its room kept at
 * about its height until then (a row is about 37 px) so the page does not jump as it arrives.
 */
export const lazyLayout = (rows: number): CSSProperties => ({ contentVisibility: "auto", containIntrinsicSize: `auto ${40 + rows * 37}px` });
