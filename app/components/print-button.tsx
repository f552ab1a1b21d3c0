/** Opens the browser's print dialog; the page's print styles drop navigation and buttons. */
export function PrintButton({ label = "Print" }: { label?: string }) {
  return (
    <button type="button" className="btn-quiet print:hidden" onClick={() => window.print()}>
      {label}
    </button>
  );
}
