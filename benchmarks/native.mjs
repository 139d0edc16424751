// Placeholder replaced below.
export function runNative() {
  return { notes: [] };
}
