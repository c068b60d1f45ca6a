/** The set of paths the user chose. */
import { describe, expect, it } from 'vitest';
import { PathGrants } from '../../../app/main/path-grants.js';

describe('PathGrants', () => {
  it('allows only what was granted, for the mode it was granted for', () => {
    const g = new PathGrants();
    g.grant('/home/ana/ball.onnx', 'read');
    g.grant('/home/ana/out.glb', 'write');
    expect(g.allows('/home/ana/ball.onnx', 'read')).toBe(true);
    expect(g.allows('/home/ana/ball.onnx', 'write')).toBe(false);
    expect(g.allows('/home/ana/out.glb', 'write')).toBe(true);
    expect(g.allows('/home/ana/other.onnx', 'read')).toBe(false);
    expect(g.list('read')).toEqual(['/home/ana/ball.onnx']);
  });
  it('compares normalized paths, so ../ tricks neither widen nor dodge a grant', () => {
    const g = new PathGrants();
    expect(g.grant('/home/ana/fields/../ball.onnx', 'read')).toBe('/home/ana/ball.onnx');
    expect(g.allows('/home/ana/./ball.onnx', 'read')).toBe(true);
    expect(g.allows('/home/ana/ball.onnx/../../etc/passwd', 'read')).toBe(false);
  });
  it('never allows a relative path, and refuses to grant one', () => {
    const g = new PathGrants();
    expect(g.allows('ball.onnx', 'read')).toBe(false);
    expect(() => g.grant('ball.onnx', 'read')).toThrow("PathGrants: path must be absolute (got 'ball.onnx')");
  });
});
