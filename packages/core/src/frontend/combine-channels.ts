import { checkBlock } from '../pipeline/block-checks.js';
import { type ChannelBlock, type FieldBlock, fieldBlock } from '../pipeline/blocks.js';
import type { Stage, StageRecord } from '../pipeline/stage.js';
import { complexArray } from '../signal/complex.js';
import type { DualPol } from '../signal/dual-pol.js';

/** What {@link combineChannels} reports. */
export interface CombineDiagnostics {
  /** Samples combined so far, per polarization. */
  readonly samples: number;
}

/**
 * The four real channels as the complex pair x = xi + j·xq, y = yi + j·yq,
 * sample for sample (the channels of equal length).
 * @example const { x, y } = combineRails({ xi, xq, yi, yq });
 */
export function combineRails(c: Pick<ChannelBlock, 'xi' | 'xq' | 'yi' | 'yq'>): DualPol {
  const n = c.xi.length;
  const x = complexArray(n);
  const y = complexArray(n);
  for (let k = 0; k < n; k++) {
    x[2 * k] = c.xi[k];
    x[2 * k + 1] = c.xq[k];
    y[2 * k] = c.yi[k];
    y[2 * k + 1] = c.yq[k];
  }
  return { x, y };
}

/**
 * Joins the four real receiver channels into the complex dual-polarization
 * field at the scope rate: x = xi + j·xq, y = yi + j·yq. Stateless.
 * @example const field = combineChannels().process({ domain: 'channels', ...sim.channels, samplesPerSymbol: 2 }); field.x.length; // 2 × samples
 */
export function combineChannels(): Stage<'channels', 'field', CombineDiagnostics> {
  return new CombineChannels();
}

class CombineChannels implements Stage<'channels', 'field', CombineDiagnostics> {
  readonly name = 'combine-channels';
  readonly input = 'channels' as const;
  readonly output = 'field' as const;
  private samples = 0;

  process(block: ChannelBlock): FieldBlock<'field'> {
    checkBlock(this.name, block, 'channels');
    const n = block.xi.length;
    const { x, y } = combineRails(block);
    this.samples += n;
    return fieldBlock('field', x, y, block.sampleRate, block.samplesPerSymbol);
  }

  flush(): null {
    return null;
  }

  reset(): void {
    this.samples = 0;
  }

  diagnostics(): CombineDiagnostics {
    return { samples: this.samples };
  }

  describe(): StageRecord {
    return { stage: this.name, options: {} };
  }
}
