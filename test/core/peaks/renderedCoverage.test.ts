/**
 * Honesty of the peak table on rendered JPEG photos through the real pipeline (see renderedCentres.ts): the stated
 * centre uncertainties against the renderer's truth, and the `blended` flag on pairs the joint fit separates.
 * Coverage of a normal distribution: 68.3 % within 1σ, 95.4 % within 2σ, 99.7 % within 3σ (from memory).
 */
import { describe, expect, it } from 'vitest';
import { pairedRenderedPeaks, type PairedPeak } from './renderedCentres.js';

const PHOTOS = 30;
const within = (pairs: PairedPeak[], k: number): number =>
  pairs.filter((p) => Math.abs(p.errorPx) <= k * p.peak.positionUncertaintyPx).length / pairs.length;

describe('findPeaks on rendered photos (render → JPEG 85–95 → decode → band → extract → peaks)', () => {
  let all: PairedPeak[] | undefined;
  const pairs = async (): Promise<PairedPeak[]> => (all ??= await pairedRenderedPeaks(PHOTOS, 30));

  // Measured on the 30 photos (0.3–1 nm/px, 720p/1080p), SNR ≥ 30, unsaturated, no other detected peak nor true line
  // (of any order, however faint) within 3 FWHM: 79 lines, 80 % within 1σ, 94 % within 2σ, 97 % within 3σ. Without
  // the systematic term (centreSystematicFwhm = 0) the same lines gave 63 %, 85 % and 96 %: errors of 0.02–0.05 px
  // where the fit claimed 0.01. The floors sit a little under the measurement.
  it('states centre uncertainties that cover the truth for isolated strong lines: ≥ 68 % within 1σ, ≥ 90 % within 2σ', async () => {
    const isolated = (await pairs()).filter((p) => p.peakGapFwhm >= 3 && p.truthGapFwhm >= 3);
    expect(isolated.length).toBeGreaterThanOrEqual(60);
    expect(within(isolated, 1)).toBeGreaterThanOrEqual(0.68);
    expect(within(isolated, 1)).toBeLessThanOrEqual(0.9); // and not inflated
    expect(within(isolated, 2)).toBeGreaterThanOrEqual(0.9);
  }, 300_000);

  // Lines 1.15–3 FWHM from their nearest detected neighbour whose true neighbours are as far (no hidden partner):
  // measured 156 lines, 152 unflagged, of which 75 % / 91 % / 97 % lie within 1/2/3σ — the joint fit separates them
  // and says how well. 20 of the 22 lines 1.2–1.5 FWHM apart stay unflagged; the former rule (another centre within
  // 1.5 FWHM) flagged every one of them.
  it('leaves lines 1.2–1.5 FWHM from a neighbour that the joint fit separates unflagged, with honest uncertainties', async () => {
    const close = (await pairs()).filter((p) => p.peakGapFwhm >= 1.15 && p.peakGapFwhm < 3 && p.truthGapFwhm >= 1.15);
    const unflagged = close.filter((p) => !p.peak.blended);
    expect(unflagged.length).toBeGreaterThanOrEqual(100);
    expect(within(unflagged, 1)).toBeGreaterThanOrEqual(0.68);
    expect(within(unflagged, 2)).toBeGreaterThanOrEqual(0.88);
    const tight = close.filter((p) => p.peakGapFwhm >= 1.2 && p.peakGapFwhm < 1.5);
    expect(tight.length).toBeGreaterThanOrEqual(10);
    expect(tight.filter((p) => !p.peak.blended).length / tight.length).toBeGreaterThanOrEqual(0.75);
  }, 300_000);
});
