/**
 * Thrown when a reference cannot be measured against at all: it holds no
 * symbols, too few to synchronize on, polarizations of different lengths,
 * no power, or symbols that are not the modulation's points. An analysis
 * reports it as its reference check failing, whatever the wording.
 * @example try { referenceLabels(constellation('16qam'), ref); } catch (e) { if (e instanceof ReferenceMismatchError) console.log(e.message); }
 */
export class ReferenceMismatchError extends RangeError {
  /** Always 'ReferenceMismatchError'. */
  override readonly name: string = 'ReferenceMismatchError';
}
