/**
 * Block-diagonal augmentation of independent process models into one state: a `level`,
 * `level_rate` constant-velocity block and a `pressure_bias` Gauss–Markov block become one
 * 3-state model with A = blkdiag(A₁, A₂) and Q = blkdiag(Q₁, Q₂). State names are concatenated
 * in block order and must be unique across blocks. Blocks with a known input keep it: the
 * composite's input vector is the blocks' inputs concatenated in block order.
 */
import type { ProcessModel } from './process-model.js';
import { ModelConfigError } from '../model-config-error.js';

interface Block {
  readonly model: ProcessModel;
  /** Offset of the block's first state in the composite state. */
  readonly offset: number;
  /** Offset of the block's first input in the composite input (−1 without input). */
  readonly inputOffset: number;
  readonly A: Float64Array;
  readonly Q: Float64Array;
  readonly x: Float64Array;
  readonly u: Float64Array;
}

function checkBlocks(blocks: readonly ProcessModel[]): readonly string[] {
  if (!Array.isArray(blocks) || blocks.length === 0) {
    throw new ModelConfigError('blocks', `blocks must be a non-empty array of process models, got ${String(blocks)}`);
  }
  const owner = new Map<string, number>();
  blocks.forEach((b, i) => {
    for (const name of b.stateNames) {
      const first = owner.get(name);
      if (first !== undefined) {
        throw new ModelConfigError('blocks', `state name '${name}' appears in block ${first} and block ${i}`);
      }
      owner.set(name, i);
    }
  });
  return Object.freeze(blocks.flatMap((b) => [...b.stateNames]));
}

function hasInput(m: ProcessModel): boolean {
  return m.inputDim !== undefined && m.inputDim > 0 && m.applyInputInPlace !== undefined;
}

/** Block-diagonal composition of process models (augmented state). */
export class CompositeModel implements ProcessModel {
  /** Sum of the blocks' dimensions. */
  readonly dim: number;
  /** The blocks' state names concatenated in block order. */
  readonly stateNames: readonly string[];
  /** Sum of the blocks' input dimensions; absent when no block has an input. */
  declare readonly inputDim?: number;
  /** Applies each block's input to its slice of x; absent when no block has an input. */
  declare readonly applyInputInPlace?: (dtS: number, u: Float64Array, x: Float64Array) => void;
  private readonly blocks: readonly Block[];

  /** Composes the blocks; throws ModelConfigError for an empty list or a duplicate state name. */
  constructor(blocks: readonly ProcessModel[]) {
    this.stateNames = checkBlocks(blocks);
    this.dim = this.stateNames.length;
    let offset = 0;
    let inputOffset = 0;
    this.blocks = blocks.map((model) => {
      const d = model.dim;
      const input = hasInput(model);
      const block: Block = {
        model,
        offset,
        inputOffset: input ? inputOffset : -1,
        A: new Float64Array(d * d),
        Q: new Float64Array(d * d),
        x: new Float64Array(d),
        u: new Float64Array(input ? model.inputDim! : 0),
      };
      offset += d;
      if (input) inputOffset += model.inputDim!;
      return block;
    });
    if (inputOffset > 0) {
      this.inputDim = inputOffset;
      this.applyInputInPlace = (dtS, u, x) => this.applyInputs(dtS, u, x);
    }
  }

  /** Writes the block-diagonal A(dtS) and Q(dtS) (dim×dim) into the caller's buffers. */
  discretizeInto(dtS: number, A: Float64Array, Q: Float64Array): void {
    const n = this.dim;
    A.fill(0, 0, n * n);
    Q.fill(0, 0, n * n);
    // Indexed loops: the per-step path must not create iterators.
    for (let k = 0; k < this.blocks.length; k++) {
      const b = this.blocks[k]!;
      const d = b.model.dim;
      b.model.discretizeInto(dtS, b.A, b.Q);
      for (let i = 0; i < d; i++) {
        const dst = (b.offset + i) * n + b.offset;
        for (let j = 0; j < d; j++) {
          A[dst + j] = b.A[i * d + j]!;
          Q[dst + j] = b.Q[i * d + j]!;
        }
      }
    }
  }

  private applyInputs(dtS: number, u: Float64Array, x: Float64Array): void {
    for (let k = 0; k < this.blocks.length; k++) {
      const b = this.blocks[k]!;
      if (b.inputOffset < 0) continue;
      const d = b.model.dim;
      for (let i = 0; i < b.u.length; i++) b.u[i] = u[b.inputOffset + i]!;
      for (let i = 0; i < d; i++) b.x[i] = x[b.offset + i]!;
      b.model.applyInputInPlace!(dtS, b.u, b.x);
      for (let i = 0; i < d; i++) x[b.offset + i] = b.x[i]!;
    }
  }
}
