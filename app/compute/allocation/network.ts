/**
 * The weekly training network of one instance:
 *   source → candidate (its hours) → device-week in (the worker's weekly room)
 *          → device-week out (bookable device-hours) → trainer-week (certified only, unbounded)
 *          → sink (trainer-hours × trainees per session).
 * A set of candidates can be trained exactly when the maximum flow saturates all their source edges
 * (max-flow min-cut; Ford & Fulkerson 1956). Any device-week flow can be split among trainers freely
 * because every trainee on a device type may join any certified trainer's session.
 */

import { EPS, type Instance } from "./instance";
import { FlowNetwork } from "./maxflow";

export const SOURCE = 0;
export const SINK = 1;

export class TrainingNetwork {
  readonly inst: Instance;
  readonly net: FlowNetwork;
  /** source edge of each candidate */
  readonly sourceEdge: number[];
  /** per candidate, per week: edge to the device-week, or -1 */
  readonly weekEdge: number[][];
  /** device-week capacity edges [d][k] */
  readonly deviceEdge: number[][];
  /** trainer-week sink edges [t][k] */
  readonly trainerEdge: number[][];
  /** device-out → trainer edges per [d][k]: list of [trainer, edge] */
  readonly supervisionEdges: [number, number][][][];
  /** scale of each candidate (1 = selected, 0 = not, fractions for LP separation) */
  readonly scale: number[];
  private readonly candNode0: number;
  private readonly dwIn0: number;

  constructor(inst: Instance) {
    this.inst = inst;
    const D = inst.deviceIds.length;
    const T = inst.trainerIds.length;
    const H = inst.weeks;
    const C = inst.candidates.length;
    this.candNode0 = 2;
    this.dwIn0 = 2 + C;
    const dwOut0 = this.dwIn0 + D * H;
    const tw0 = dwOut0 + D * H;
    const net = new FlowNetwork(tw0 + T * H);
    this.net = net;
    this.sourceEdge = [];
    this.weekEdge = [];
    this.scale = new Array(C).fill(0);
    // Trainer and device edges first so that candidate edges are scanned last (stable order).
    this.trainerEdge = [];
    for (let t = 0; t < T; t++) {
      this.trainerEdge.push([]);
      for (let k = 0; k < H; k++) this.trainerEdge[t].push(net.addEdge(tw0 + t * H + k, SINK, inst.trainerCap[t][k]));
    }
    this.deviceEdge = [];
    this.supervisionEdges = [];
    for (let d = 0; d < D; d++) {
      this.deviceEdge.push([]);
      this.supervisionEdges.push([]);
      for (let k = 0; k < H; k++) {
        this.deviceEdge[d].push(net.addEdge(this.dwIn0 + d * H + k, dwOut0 + d * H + k, inst.deviceCap[d][k]));
        const list: [number, number][] = [];
        for (let t = 0; t < T; t++)
          if (inst.trainerHolds[t][d] && inst.trainerCap[t][k] > 0)
            list.push([t, net.addEdge(dwOut0 + d * H + k, tw0 + t * H + k, Infinity)]);
        this.supervisionEdges[d].push(list);
      }
    }
    for (const c of inst.candidates) {
      const node = this.candNode0 + c.index;
      this.sourceEdge.push(net.addEdge(SOURCE, node, 0));
      const row: number[] = [];
      for (let k = 0; k < H; k++) row.push(c.weekCap[k] > 0 ? net.addEdge(node, this.dwIn0 + c.device * H + k, 0) : -1);
      this.weekEdge.push(row);
    }
  }

  candidateNode(c: number): number {
    return this.candNode0 + c;
  }
  deviceInNode(d: number, k: number): number {
    return this.dwIn0 + d * this.inst.weeks + k;
  }

  /** Set a candidate's scale z: source capacity z·hours, weekly capacities z·weekCap (with a deadline). */
  setScale(c: number, z: number, lastWeek = this.inst.weeks - 1): void {
    const cand = this.inst.candidates[c];
    const f = this.net.flow(this.sourceEdge[c]);
    if (f > 0) this.net.cancelFrom(this.candidateNode(c), f, SINK);
    this.net.residual[this.sourceEdge[c]] = 0;
    this.net.residual[this.sourceEdge[c] ^ 1] = 0;
    this.net.setCapacity(this.sourceEdge[c], z * cand.hours);
    for (let k = 0; k < this.inst.weeks; k++) {
      const e = this.weekEdge[c][k];
      if (e < 0) continue;
      this.net.residual[e ^ 1] = 0;
      this.net.residual[e] = k <= lastWeek ? z * cand.weekCap[k] : 0;
    }
    this.scale[c] = z;
  }

  augment(): number {
    return this.net.augment(SOURCE, SINK);
  }

  shortfall(c: number): number {
    const cand = this.inst.candidates[c];
    return this.scale[c] * cand.hours - this.net.flow(this.sourceEdge[c]);
  }

  /** Select candidate c (with an optional deadline week); keeps it only if it can be fully trained. */
  tryAdd(c: number, lastWeek = this.inst.weeks - 1): boolean {
    this.setScale(c, 1, lastWeek);
    this.augment();
    if (this.shortfall(c) <= EPS * Math.max(1, this.inst.candidates[c].hours)) return true;
    this.setScale(c, 0);
    return false;
  }

  remove(c: number): void {
    this.setScale(c, 0);
  }

  /** Hours candidate c trains in each week under the current flow. */
  weeklyHours(c: number): number[] {
    return this.weekEdge[c].map((e) => (e < 0 ? 0 : this.net.flow(e)));
  }

  /** For each week, the device types whose device-week node is on the source side of a minimum cut. */
  cutDeviceSets(): number[][] {
    const side = this.net.sourceSide(SOURCE);
    const H = this.inst.weeks;
    const sets: number[][] = [];
    for (let k = 0; k < H; k++) {
      const s: number[] = [];
      for (let d = 0; d < this.inst.deviceIds.length; d++) if (side[this.deviceInNode(d, k)]) s.push(d);
      sets.push(s);
    }
    return sets;
  }
}
