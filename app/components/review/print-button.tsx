"use client";

/** Opens the browser's print dialog (the page has print styles for A4 and Letter). */
export function PrintButton() {
  return (
    <button type="button" className="secondary" onClick={() => window.print()}>
      Print
    </button>
  );
}
