/**
 * A set of workers chosen for training, kept realisable at every step by the incremental max-flow:
 * a worker is only added when the network can still deliver every chosen worker's full hours.
 */

import type { Instance } from "./instance";
import { TrainingNetwork } from "./network";

export class Selection {
  readonly inst: Instance;
  readonly net: TrainingNetwork;
  /** chosen candidate per worker, −1 when not chosen */
  readonly chosen: number[];
  readonly groupCount: number[];
  objective = 0;

  constructor(inst: Instance) {
    this.inst = inst;
    this.net = new TrainingNetwork(inst);
    this.chosen = new Array(inst.workers.length).fill(-1);
    this.groupCount = inst.groupIds.map(() => 0);
  }

  get work(): number {
    return this.net.net.work;
  }

  isChosen(w: number): boolean {
    return this.chosen[w] >= 0;
  }

  /** Try the worker's options in the given order; true when one fits. */
  tryWorker(w: number, options: number[] = this.inst.workers[w].candidates): boolean {
    if (this.chosen[w] >= 0) return true;
    for (const c of options) {
      if (this.net.tryAdd(c)) {
        this.chosen[w] = c;
        this.groupCount[this.inst.workers[w].group]++;
        this.objective += this.inst.candidates[c].value;
        return true;
      }
    }
    return false;
  }

  drop(w: number): void {
    const c = this.chosen[w];
    if (c < 0) return;
    this.net.remove(c);
    this.chosen[w] = -1;
    this.groupCount[this.inst.workers[w].group]--;
    this.objective -= this.inst.candidates[c].value;
  }

  chosenWorkers(): number[] {
    const out: number[] = [];
    this.chosen.forEach((c, w) => {
      if (c >= 0) out.push(w);
    });
    return out;
  }

  meetsGroupMinimums(): boolean {
    return this.inst.groupMinimum.every((m, g) => this.groupCount[g] >= m);
  }

  /** candidate per worker, for snapshots */
  snapshot(): number[] {
    return [...this.chosen];
  }

  /** Rebuild the flow for a snapshot known to be realisable. */
  restore(snap: number[]): void {
    for (let w = 0; w < this.chosen.length; w++) if (this.chosen[w] >= 0 && this.chosen[w] !== snap[w]) this.drop(w);
    for (let w = 0; w < snap.length; w++) if (snap[w] >= 0 && this.chosen[w] < 0) this.tryWorker(w, [snap[w]]);
  }
}
