/**
 * Binding resources from the Lagrangian multipliers, which play the part of LP duals: the price of a
 * device-week or trainer-week is the objective gained per extra hour there (to first order).
 */

import type { Instance } from "./instance";
import type { LagrangianResult } from "./lagrangian";
import type { BindingResource } from "./types";

const MIN_PRICE = 1e-4;

export function bindingResources(
  inst: Instance,
  lag: LagrangianResult,
  chosen: number[],
  limit = 15,
): BindingResource[] {
  // typical value of one more ready worker: mean priority of those left out (or of everyone)
  const left = inst.workers.filter((w, i) => chosen[i] < 0 && w.candidates.length > 0);
  const pool = left.length ? left : inst.workers;
  const typical = pool.reduce((s, w) => s + w.priority, 0) / Math.max(1, pool.length);
  const perHours = (price: number) => (typical > 0 && price > 0 ? typical / price : Infinity);
  const count = (h: number) => (h < 1 ? h.toFixed(2) : String(Math.round(h)));
  const say = (price: number) =>
    `worth roughly one more worker ready for every ${count(perHours(price))} extra hours (about ${price.toFixed(3)} in plan value per hour)`;
  const sayWeekly = (price: number) =>
    `worth roughly one more worker ready for every ${count(perHours(price))} hours added to each week (about ${price.toFixed(3)} in plan value)`;
  const weekly: BindingResource[] = [];
  const totals: BindingResource[] = [];
  inst.deviceIds.forEach((id, d) => {
    let sum = 0;
    inst.deviceCap[d].forEach((_, k) => {
      const p = lag.devicePrice[d][k];
      if (p < MIN_PRICE) return;
      sum += p;
      weekly.push({
        kind: "device",
        id,
        week: k,
        shadowPrice: p,
        description: `One more bookable hour on device type ${id} in week ${k + 1} of the horizon is ${say(p)}.`,
      });
    });
    if (sum >= MIN_PRICE)
      totals.push({
        kind: "device",
        id,
        week: null,
        shadowPrice: sum,
        description: `One more bookable hour on device type ${id} in every week of the horizon (${inst.weeks} h in all) is ${sayWeekly(sum)}.`,
      });
  });
  inst.trainerIds.forEach((id, t) => {
    const held = inst.deviceIds.filter((_, d) => inst.trainerHolds[t][d]).join(", ");
    let sum = 0;
    inst.trainerCap[t].forEach((_, k) => {
      // price per supervised hour × trainees per session = price per trainer-hour
      const p = lag.trainerPrice[t][k] * inst.traineesPerSession[t];
      if (p < MIN_PRICE) return;
      sum += p;
      weekly.push({
        kind: "trainer",
        id,
        week: k,
        shadowPrice: p,
        description: `One more hour from trainer ${id} (${held}) in week ${k + 1} of the horizon is ${say(p)}.`,
      });
    });
    if (sum >= MIN_PRICE)
      totals.push({
        kind: "trainer",
        id,
        week: null,
        shadowPrice: sum,
        description: `One more hour from trainer ${id} (${held}) in every week of the horizon (${inst.weeks} h in all) is ${sayWeekly(sum)}.`,
      });
  });
  const byPrice = (a: BindingResource, b: BindingResource) =>
    b.shadowPrice - a.shadowPrice ||
    a.kind.localeCompare(b.kind) ||
    a.id.localeCompare(b.id) ||
    (a.week ?? -1) - (b.week ?? -1);
  return [...totals.sort(byPrice), ...weekly.sort(byPrice).slice(0, limit)];
}
