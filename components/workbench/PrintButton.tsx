'use client';

export function PrintButton() {
  return (
    <button type="button" onClick={() => window.print()} className="rounded bg-tide px-3 py-1.5 text-sm font-medium text-white hover:bg-tide-dark">
      Print or save as PDF
    </button>
  );
}
