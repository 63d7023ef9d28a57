/**
 * Disjoint sets over point indices (Tarjan 1975): union by size, path halving. `activate`
 * resets one element to its own set, so a permutation resets only the points it uses.
 */
export class UnionFind {
  readonly parent: Int32Array;
  readonly size: Int32Array;

  constructor(n: number) {
    this.parent = new Int32Array(n);
    this.size = new Int32Array(n);
  }

  activate(i: number): void {
    this.parent[i] = i;
    this.size[i] = 1;
  }

  find(i: number): number {
    const parent = this.parent;
    while (parent[i] !== i) {
      parent[i] = parent[parent[i]];
      i = parent[i];
    }
    return i;
  }

  union(a: number, b: number): void {
    let ra = this.find(a);
    let rb = this.find(b);
    if (ra === rb) return;
    if (this.size[ra] < this.size[rb]) {
      const t = ra;
      ra = rb;
      rb = t;
    }
    this.parent[rb] = ra;
    this.size[ra] += this.size[rb];
  }
}
