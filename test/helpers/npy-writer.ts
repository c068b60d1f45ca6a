/**
 * Writes a float32 `.npy` file (format 1.0, `<f4`, C order) as numpy.lib.format does (NEP 1): magic
 * `\x93NUMPY`, version 1.0, uint16 LE header length, a dict header padded with spaces and ending in
 * `\n` so the data starts at a multiple of 64 bytes, then the raw little-endian data.
 */
export function writeNpyF4(shape: number[], data: Float32Array): Uint8Array {
  const count = shape.reduce((a, b) => a * b, 1);
  if (data.length !== count) throw new Error(`writeNpyF4: ${data.length} values for shape (${shape.join(', ')})`);
  const shapeText = shape.length === 1 ? `(${shape[0]},)` : `(${shape.join(', ')})`;
  let header = `{'descr': '<f4', 'fortran_order': False, 'shape': ${shapeText}, }`;
  header += ' '.repeat((64 - ((10 + header.length + 1) % 64)) % 64) + '\n';
  const out = new Uint8Array(10 + header.length + data.byteLength);
  out.set([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, 1, 0, header.length & 0xff, header.length >> 8]);
  out.set(new TextEncoder().encode(header), 10);
  out.set(new Uint8Array(data.buffer, data.byteOffset, data.byteLength), 10 + header.length);
  return out;
}
