/**
 * Dinic's maximum-flow algorithm on real-valued capacities (Dinic 1970), kept incremental: capacities
 * may be raised or lowered between calls and augmentation continues from the current flow.
 * Edges come in pairs (e, e ^ 1); residual[e ^ 1] is the flow on forward edge e.
 */
const FLOW_EPS = 1e-9;

export class FlowNetwork {
  readonly nodeCount: number;
  private head: Int32Array;
  private next: number[] = [];
  private to: number[] = [];
  residual: number[] = [];
  private level: Int32Array;
  private iter: Int32Array;
  private queue: Int32Array;
  /** edges scanned by the phases run so far: a deterministic measure of effort */
  work = 0;

  constructor(nodeCount: number) {
    this.nodeCount = nodeCount;
    this.head = new Int32Array(nodeCount).fill(-1);
    this.level = new Int32Array(nodeCount);
    this.iter = new Int32Array(nodeCount);
    this.queue = new Int32Array(nodeCount);
  }

  addEdge(from: number, to: number, capacity: number): number {
    const e = this.to.length;
    this.to.push(to, from);
    this.residual.push(capacity, 0);
    this.next.push(this.head[from], this.head[to]);
    this.head[from] = e;
    this.head[to] = e + 1;
    return e;
  }

  flow(e: number): number {
    return this.residual[e ^ 1];
  }

  capacity(e: number): number {
    return this.residual[e] + this.residual[e ^ 1];
  }

  /** Raise or lower a forward edge's capacity; lowering below its flow requires cancelling first. */
  setCapacity(e: number, capacity: number): void {
    this.residual[e] = capacity - this.residual[e ^ 1];
  }

  head0(v: number): number {
    return this.head[v];
  }
  nextEdge(e: number): number {
    return this.next[e];
  }
  target(e: number): number {
    return this.to[e];
  }

  private bfs(s: number, t: number): boolean {
    this.level.fill(-1);
    let qh = 0;
    let qt = 0;
    this.queue[qt++] = s;
    this.level[s] = 0;
    while (qh < qt) {
      const v = this.queue[qh++];
      for (let e = this.head[v]; e !== -1; e = this.next[e]) {
        const u = this.to[e];
        if (this.residual[e] > FLOW_EPS && this.level[u] < 0) {
          this.level[u] = this.level[v] + 1;
          this.queue[qt++] = u;
        }
      }
    }
    return this.level[t] >= 0;
  }

  private dfs(v: number, t: number, pushed: number): number {
    if (v === t) return pushed;
    for (; this.iter[v] !== -1; this.iter[v] = this.next[this.iter[v]]) {
      const e = this.iter[v];
      const u = this.to[e];
      if (this.residual[e] > FLOW_EPS && this.level[u] === this.level[v] + 1) {
        const d = this.dfs(u, t, Math.min(pushed, this.residual[e]));
        if (d > FLOW_EPS) {
          this.residual[e] -= d;
          this.residual[e ^ 1] += d;
          return d;
        }
      }
    }
    return 0;
  }

  /** Augment from the current flow to a maximum flow; returns the flow added. */
  augment(s: number, t: number): number {
    let added = 0;
    while (this.bfs(s, t)) {
      this.work += this.to.length;
      for (let v = 0; v < this.nodeCount; v++) this.iter[v] = this.head[v];
      for (let f = this.dfs(s, t, Infinity); f > FLOW_EPS; f = this.dfs(s, t, Infinity)) added += f;
    }
    return added;
  }

  /**
   * Remove `amount` of flow that enters node v, following forward edges that carry flow down to t.
   * Valid on acyclic networks (ours is layered), where every unit entering v reaches t.
   */
  cancelFrom(v: number, amount: number, t: number): void {
    if (v === t) return;
    for (let e = this.head[v]; e !== -1 && amount > FLOW_EPS; e = this.next[e]) {
      if ((e & 1) === 1) continue;
      const f = this.residual[e ^ 1];
      if (f <= FLOW_EPS) continue;
      const take = Math.min(f, amount);
      this.residual[e] += take;
      this.residual[e ^ 1] -= take;
      this.cancelFrom(this.to[e], take, t);
      amount -= take;
    }
  }

  /** Nodes reachable from s in the residual network (the source side of a minimum cut). */
  sourceSide(s: number): Uint8Array {
    const seen = new Uint8Array(this.nodeCount);
    const stack = [s];
    seen[s] = 1;
    while (stack.length) {
      const v = stack.pop()!;
      for (let e = this.head[v]; e !== -1; e = this.next[e]) {
        const u = this.to[e];
        if (!seen[u] && this.residual[e] > FLOW_EPS) {
          seen[u] = 1;
          stack.push(u);
        }
      }
    }
    return seen;
  }
}
