/** Fewest symbols (used, and in the reference) for which the correlation statistics above hold. */
export const MIN_SYNC_SYMBOLS = 128;

/**
 * Symbols per block of the differential method's block correlation, and of
 * its first block, which sets the quarter turns: a cycle slip is at most one
 * per few thousand symbols where a receiver works at all, and 512 symbols
 * set a quadrant without doubt down to an SNR of 0 dB (the block sum is 512
 * against a noise of about √512 ≈ 23).
 */
export const SYNC_BLOCK_SYMBOLS = 512;

/**
 * Longest reference searched by one correlation over its whole period
 * (2^16 symbols, arrays of 1 MB); a longer one is searched block by block
 * with a leading segment of the stream (see {@link synchronize}).
 */
export const FULL_PERIOD_SYMBOLS = 1 << 16;

/**
 * Received symbols of the leading segment that a long reference is
 * correlated with: 2^15. The peak then stands about √(2^15)·ρ ≈ 180·ρ rms
 * above the floor of the other delays, far above the threshold of 6.
 */
export const SEGMENT_SYMBOLS = 1 << 15;

/**
 * Most delays a segment may fit equally well before the search gives up:
 * 64. A reference that repeats a shorter pattern more often than that
 * (a short PRBS written out many times) should be given as one period.
 */
export const MAX_TIED_DELAYS = 64;
