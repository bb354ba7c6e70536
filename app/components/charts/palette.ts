/** Chart colours, matching app/globals.css (ink-blue structure, amber signal). */
export const CHART = {
  ink: "#1d2433",
  structure: "#23395d",
  second: "#2f6b8f",
  signal: "#9a4a00",
  bandFill: "#fff1dc",
  grid: "#e4dfd3",
  axis: "#4a5468",
  limit: "#6b7385",
  more: "#b2182b",
  fewer: "#2166ac",
} as const;
