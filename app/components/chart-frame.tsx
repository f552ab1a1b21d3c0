import type { ReactNode } from "react";

// The box a chart draws in, with the chart's spoken summary. Charts measure this box and redraw when it
// changes size; until they have redrawn (just after a phone turns or a window narrows), a chart still
// drawn at the old width is clipped here instead of widening the whole page.
export function ChartFrame({
  label,
  height,
  testId,
  children,
}: {
  label: string;
  height?: number;
  testId?: string;
  children: ReactNode;
}) {
  return (
    <div
      role="img"
      aria-label={label}
      data-testid={testId}
      className="w-full min-w-0 overflow-hidden"
      style={height === undefined ? undefined : { height }}
    >
      {children}
    </div>
  );
}
