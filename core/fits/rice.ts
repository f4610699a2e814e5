// Rice coding of integer tiles as defined by the FITS tiled image compression convention
// (FITS Standard 4.0, section 10.4.1, "RICE_1"): per tile, the first value raw in BYTEPIX bytes
// big-endian, then blocks of BLOCKSIZE pixel differences, each block led by an FS code of
// 3/4/5 bits (BYTEPIX 1/2/4): 0 = all differences zero, FSMAX+1 = differences stored raw,
// otherwise Rice codes with FS low bits. Differences are mapped to unsigned (0,-1,1,-2 -> 0,1,2,3)
// and wrap modulo 2^(8*BYTEPIX).

export interface RiceParams {
  /** Bytes per value: 1, 2 or 4. */
  readonly bytePix: 1 | 2 | 4;
  /** Pixels per coding block (the convention's default is 32). */
  readonly blockSize: number;
}

function fsParams(bytePix: number): { fsBits: number; fsMax: number; bBits: number } {
  if (bytePix === 1) return { fsBits: 3, fsMax: 6, bBits: 8 };
  if (bytePix === 2) return { fsBits: 4, fsMax: 14, bBits: 16 };
  return { fsBits: 5, fsMax: 25, bBits: 32 };
}

/** Fewest compressed bytes any valid stream of n pixels can take (all blocks low-entropy). */
export function riceMinBytes(n: number, p: RiceParams): number {
  const { fsBits } = fsParams(p.bytePix);
  return p.bytePix + Math.ceil((Math.ceil(n / p.blockSize) * fsBits) / 8);
}

/** Thrown (as a plain Error with this message prefix) when a stream is corrupt; callers wrap it. */
export class RiceDecodeError extends Error {}

/**
 * Decodes n values from `c` into `out` (values wrap to the signed range of bytePix bytes;
 * callers reinterpret, e.g. `& 0xff` for unsigned 8-bit images). Throws RiceDecodeError when
 * the stream ends early or an FS code is out of range.
 */
export function riceDecode(c: Uint8Array, n: number, p: RiceParams, out: Int32Array): void {
  const { fsBits, fsMax, bBits } = fsParams(p.bytePix);
  const bytePix = p.bytePix;
  const nblock = p.blockSize;
  const clen = c.length;
  if (n === 0) return;
  if (clen < bytePix + 1) throw new RiceDecodeError(`compressed tile of ${clen} bytes is too short`);
  const shift = 32 - 8 * bytePix;
  let lastpix = 0;
  for (let k = 0; k < bytePix; k++) lastpix = (lastpix << 8) | c[k];
  lastpix = (lastpix << shift) >> shift;
  let ci = bytePix;
  // The bit buffer b holds nbits unread low bits; reading past the end yields zeros, and the
  // position is checked after each block (as the reference decoder does).
  let b = c[ci++];
  let nbits = 8;
  const fsMask = (1 << fsBits) - 1;
  for (let i = 0; i < n;) {
    nbits -= fsBits;
    while (nbits < 0) {
      b = ((b << 8) | (ci < clen ? c[ci] : 0)) >>> 0;
      ci++;
      nbits += 8;
    }
    const fs = ((b >>> nbits) & fsMask) - 1;
    b &= (1 << nbits) - 1;
    let imax = i + nblock;
    if (imax > n) imax = n;
    if (fs < 0) {
      for (; i < imax; i++) out[i] = lastpix;
    } else if (fs === fsMax) {
      for (; i < imax; i++) {
        // Read bBits raw bits.
        let diff = 0;
        let need = bBits;
        while (need > 0) {
          if (nbits === 0) {
            b = ci < clen ? c[ci] : 0;
            ci++;
            nbits = 8;
          }
          const take = need < nbits ? need : nbits;
          nbits -= take;
          diff = (diff * (1 << take)) + ((b >>> nbits) & ((1 << take) - 1));
          b &= (1 << nbits) - 1;
          need -= take;
        }
        diff >>>= 0;
        const d = (diff & 1) === 0 ? diff >>> 1 : ~(diff >>> 1);
        lastpix = ((d + lastpix) << shift) >> shift;
        out[i] = lastpix;
      }
    } else if (fs > fsMax) {
      throw new RiceDecodeError(`block FS code ${fs + 1} exceeds the maximum ${fsMax + 1}`);
    } else {
      for (; i < imax; i++) {
        // Count leading zeros (the unary top part).
        let nzero = 0;
        while (b === 0) {
          if (ci >= clen) throw new RiceDecodeError('compressed stream ends inside a Rice code');
          nzero += nbits;
          b = c[ci++];
          nbits = 8;
        }
        // Position of the highest set bit in b (b < 2^nbits).
        const hb = 31 - Math.clz32(b);
        nzero += nbits - 1 - hb;
        nbits = hb;
        b ^= 1 << nbits;
        nbits -= fs;
        while (nbits < 0) {
          b = ((b << 8) | (ci < clen ? c[ci] : 0)) >>> 0;
          ci++;
          nbits += 8;
        }
        const low = b >>> nbits;
        b &= (1 << nbits) - 1;
        const diff = (nzero * (1 << fs) + low) >>> 0;
        const d = (diff & 1) === 0 ? diff >>> 1 : ~(diff >>> 1);
        lastpix = ((d + lastpix) << shift) >> shift;
        out[i] = lastpix;
      }
    }
    if (ci > clen) throw new RiceDecodeError(`compressed stream of ${clen} bytes ended before pixel ${i} of ${n}`);
  }
}

/** Growing byte buffer with a bit writer (most significant bit first). */
class BitWriter {
  buf: Uint8Array;
  len = 0;
  acc = 0; // pending bits, fewer than 8
  accBits = 0;
  constructor(capacity: number) { this.buf = new Uint8Array(Math.max(16, capacity)); }
  private byte(v: number): void {
    if (this.len === this.buf.length) {
      const next = new Uint8Array(this.buf.length * 2);
      next.set(this.buf);
      this.buf = next;
    }
    this.buf[this.len++] = v;
  }
  /** Writes the low n bits of v, n <= 24 (the accumulator stays below 2^31). */
  private small(v: number, n: number): void {
    this.acc = (this.acc << n) | (v & ((1 << n) - 1));
    this.accBits += n;
    while (this.accBits >= 8) {
      this.accBits -= 8;
      this.byte((this.acc >>> this.accBits) & 0xff);
    }
    this.acc &= (1 << this.accBits) - 1;
  }
  /** Writes the low n bits of v (n <= 32). */
  bits(v: number, n: number): void {
    if (n > 24) {
      this.small((v >>> 16) & 0xffff, n - 16);
      this.small(v & 0xffff, 16);
    } else {
      this.small(v, n);
    }
  }
  /** Writes `count` zero bits then a one bit. */
  unary(count: number): void {
    while (count > 16) { this.small(0, 16); count -= 16; }
    this.small(1, count + 1);
  }
  finish(): Uint8Array {
    if (this.accBits > 0) { this.byte((this.acc << (8 - this.accBits)) & 0xff); this.acc = 0; this.accBits = 0; }
    return this.buf.slice(0, this.len);
  }
}

/** Rice-encodes the values (taken modulo 2^(8*bytePix)); the inverse of riceDecode. */
export function riceEncode(values: Int32Array, p: RiceParams): Uint8Array {
  const { fsBits, fsMax, bBits } = fsParams(p.bytePix);
  const n = values.length;
  const w = new BitWriter(n * p.bytePix + 16);
  const shift = 32 - 8 * p.bytePix;
  const wrap = (v: number) => (v << shift) >> shift;
  const first = n > 0 ? wrap(values[0]) : 0;
  w.bits(first, 8 * p.bytePix);
  let lastpix = first;
  const diff = new Uint32Array(p.blockSize);
  for (let i = 0; i < n; i += p.blockSize) {
    const m = Math.min(p.blockSize, n - i);
    let sum = 0;
    for (let j = 0; j < m; j++) {
      const next = wrap(values[i + j]);
      const d = wrap(next - lastpix);
      // Map to unsigned: d >= 0 -> 2d, d < 0 -> -2d - 1.
      diff[j] = d < 0 ? (~(d << 1)) >>> 0 : (d << 1) >>> 0;
      if (p.bytePix < 4) diff[j] &= (1 << (8 * p.bytePix)) - 1;
      sum += diff[j];
      lastpix = next;
    }
    // Split level from the mean mapped difference (as the convention's reference coder does).
    let dpsum = (sum - Math.floor(m / 2) - 1) / m;
    if (dpsum < 0) dpsum = 0;
    let psum = Math.floor(dpsum) / 2;
    psum = Math.floor(psum);
    let fs = 0;
    while (psum > 0) { fs++; psum = Math.floor(psum / 2); }
    if (fs >= fsMax) {
      w.bits(fsMax + 1, fsBits);
      for (let j = 0; j < m; j++) w.bits(diff[j], bBits);
    } else if (fs === 0 && sum === 0) {
      w.bits(0, fsBits);
    } else {
      w.bits(fs + 1, fsBits);
      for (let j = 0; j < m; j++) {
        const v = diff[j];
        w.unary(Math.floor(v / 2 ** fs));
        if (fs > 0) w.bits(v & ((1 << fs) - 1), fs);
      }
    }
  }
  return w.finish();
}
