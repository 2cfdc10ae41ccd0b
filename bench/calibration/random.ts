/**
 * A small seeded random number generator for the calibration simulations, so every figure in
 * bench/CALIBRATION.md can be reproduced from its seed. mulberry32 (a public-domain 32-bit
 * generator, common practice for reproducible simulations in JavaScript) feeds the uniform
 * draws; normals come from the Box–Muller transform (Box & Muller 1958, Ann. Math. Statist. 29, 610).
 */
export interface Random {
  /** uniform on [0, 1) */
  uniform(): number;
  /** standard normal */
  normal(): number;
  /** 1 with probability p, else 0 */
  bernoulli(p: number): 0 | 1;
  /** an index drawn with probability proportional to its weight */
  pick(weights: readonly number[]): number;
}

export function seededRandom(seed: number): Random {
  let state = seed >>> 0;
  const uniform = () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  return {
    uniform,
    normal() {
      const u = 1 - uniform();
      const v = uniform();
      return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
    },
    bernoulli: (p) => (uniform() < p ? 1 : 0),
    pick(weights) {
      const total = weights.reduce((sum, weight) => sum + weight, 0);
      let target = uniform() * total;
      for (let index = 0; index < weights.length; index += 1) {
        target -= weights[index] as number;
        if (target < 0) return index;
      }
      return weights.length - 1;
    },
  };
}
