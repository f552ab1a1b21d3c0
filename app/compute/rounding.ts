/** Rounds to one decimal place (hours are shown and reported to 0.1 h). */
export const round1 = (x: number) => Math.round(x * 10) / 10;
