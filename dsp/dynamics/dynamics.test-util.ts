// Test signals shared by the dynamics tests (not a test file itself).
export function sine(frames: number, freqHz: number, peak: number, sampleRate: number, phase = 0): Float64Array {
  const out = new Float64Array(frames);
  const w = (2 * Math.PI * freqHz) / sampleRate;
  for (let i = 0; i < frames; i++) out[i] = peak * Math.sin(w * i + phase);
  return out;
}
