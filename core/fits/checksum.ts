// The FITS checksum convention (FITS Standard 4.0, section 4.4.2.7 and appendix J): DATASUM is the
// 32-bit ones' complement sum of the data records as big-endian words, CHECKSUM makes the sum of
// the whole HDU (header and data) equal to -0 (all ones). When present they are verified, so a
// corrupt tile or a damaged header is refused instead of decoding to wrong values.

/** Ones' complement sum of big-endian 32-bit words of bytes[start, start+length), zero-padded. */
export function onesComplementSum(bytes: Uint8Array, start: number, length: number, initial = 0): number {
  let hi = Math.floor(initial / 65536);
  let lo = initial % 65536;
  const end = Math.min(bytes.length, start + length);
  let i = start;
  for (; i + 4 <= end; i += 4) {
    hi += (bytes[i] << 8) | bytes[i + 1];
    lo += (bytes[i + 2] << 8) | bytes[i + 3];
  }
  // A final partial word (only when the file lacks its last padding): zeros complete it.
  if (i < end) {
    const b = [0, 0, 0, 0];
    for (let k = 0; i + k < end; k++) b[k] = bytes[i + k];
    hi += (b[0] << 8) | b[1];
    lo += (b[2] << 8) | b[3];
  }
  let hic = Math.floor(hi / 65536), loc = Math.floor(lo / 65536);
  while (hic || loc) {
    hi = (hi % 65536) + loc;
    lo = (lo % 65536) + hic;
    hic = Math.floor(hi / 65536);
    loc = Math.floor(lo / 65536);
  }
  return hi * 65536 + lo;
}

/** Ones' complement addition of two 32-bit sums. */
export function addOnesComplement(a: number, b: number): number {
  const s = a + b;
  return s > 0xffffffff ? s - 0xffffffff : s;
}
