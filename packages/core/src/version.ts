/** Version of the Intradyne libraries, recorded in every result for reproducibility. */
export const LIBRARY_VERSION = '0.1.0';
