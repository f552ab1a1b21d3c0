// Small seeded PRNG (mulberry32) so the invented demo data is the same on every machine.
export { mulberry32 } from "../../app/compute/seeded-random";

export function pick<T>(rand: () => number, items: readonly T[]): T {
  return items[Math.floor(rand() * items.length)];
}
