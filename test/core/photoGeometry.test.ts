import { describe, expect, it } from 'vitest';
import { parsePhotoGeometry, photoGeometryComment, type PhotoGeometry } from '../../src/core/spectrum/photoGeometry.js';
import { parseSpectrumCsv } from '../../src/core/spectrum/spectrumCsv.js';

const G: PhotoGeometry = {
  sourceFile: 'rig.jpg',
  widthPx: 1920,
  heightPx: 1080,
  focalLength35mmMm: 26,
  band: { center: { x: 1194.73, y: 521.79 }, angleDeg: 1.79, slantDeg: 0.72, lengthPx: 933.95, heightPx: 209.55 },
  zeroOrderPx: -643.77,
};

const table = (comment: string) => `${comment}\nposition_px,intensity\n${Array.from({ length: 8 }, (_, i) => `${i},${i % 3}`).join('\n')}\n`;

describe('photo geometry in a spectrum CSV comment', () => {
  it('survives the round trip through the CSV reader, which takes the comment as metadata', () => {
    const t = parseSpectrumCsv(table(photoGeometryComment(G)), { source: 's.csv' });
    expect(t.spectrum.intensity.length).toBe(8);
    expect(parsePhotoGeometry(t.metadata, 's.csv')).toEqual({ geometry: G, warnings: [] });
  });

  it('optional fields stay optional; no comment is no geometry', () => {
    const { focalLength35mmMm: _f, zeroOrderPx: _z, ...bare } = G;
    const t = parseSpectrumCsv(table(photoGeometryComment(bare)), { source: 's.csv' });
    expect(parsePhotoGeometry(t.metadata, 's.csv').geometry).toEqual(bare);
    expect(parsePhotoGeometry(['# exported by hand'], 's.csv')).toEqual({ geometry: null, warnings: [] });
  });

  it('a damaged comment is left out with a warning that names the file and the field', () => {
    const bad = photoGeometryComment(G).replace('"width_px":1920', '"width_px":-5');
    const r = parsePhotoGeometry([bad], 's.csv');
    expect(r.geometry).toBeNull();
    expect(r.warnings).toEqual(['s.csv: the photo_geometry comment is damaged (width_px: expected a positive number); read without it, as a spectrum of unknown geometry']);
    expect(parsePhotoGeometry(['# photo_geometry: {"width_px":'], 's.csv').warnings[0]).toMatch(/damaged \(not JSON\)/);
    const noBand = photoGeometryComment(G).replace(/"band":\{[^}]*\},/, '');
    expect(parsePhotoGeometry([noBand], 's.csv').warnings[0]).toMatch(/damaged \(band: missing\)/);
  });
});
