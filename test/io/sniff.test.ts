import { describe, expect, it } from 'vitest';
import { sniffKind } from '../../src/io/sniff.js';

// Signatures: JPEG SOI FF D8 FF (ITU-T T.81), PNG 89 50 4E 47 0D 0A 1A 0A (PNG spec §5.2), TIFF II*\0 / MM\0* (TIFF 6.0),
// WebP RIFF....WEBP (RFC 9649).
describe('sniffKind(bytes)', () => {
  it('recognises image signatures and text, whatever the file is called', () => {
    expect(sniffKind(Uint8Array.from([0xff, 0xd8, 0xff, 0xe0, 0, 0]))).toBe('jpeg');
    expect(sniffKind(Uint8Array.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]))).toBe('png');
    expect(sniffKind(Uint8Array.from([0x49, 0x49, 0x2a, 0]))).toBe('tiff');
    expect(sniffKind(Uint8Array.from([0x4d, 0x4d, 0, 0x2a]))).toBe('tiff');
    expect(sniffKind(new TextEncoder().encode('RIFF\x10\0\0\0WEBPVP8 '))).toBe('webp');
    expect(sniffKind(new TextEncoder().encode('angle_deg,intensity\n0,1.2\n'))).toBe('text');
    expect(sniffKind(new TextEncoder().encode('λ,Å — ünïcode\n'))).toBe('text');
    expect(sniffKind(Uint8Array.from([0x00, 0x01, 0x02, 0x03]))).toBe('unknown');
    expect(sniffKind(new Uint8Array(0))).toBe('unknown');
  });
});
