/** The field named on the command line. */
import { describe, expect, it } from 'vitest';
import { startupFieldPath } from '../../../app/main/startup-field-path.js';

describe('startupFieldPath', () => {
  it('takes the first argument after the app, resolved against the folder npm start ran in', () => {
    // `npm start -- fields/ball.onnx` runs `electron build/app/main/main.js fields/ball.onnx`.
    expect(startupFieldPath(['/usr/bin/electron', 'build/app/main/main.js', 'fields/ball.onnx'], false, '/home/ana')).toBe('/home/ana/fields/ball.onnx');
    expect(startupFieldPath(['/opt/Fieldkiln/fieldkiln', '/data/crate.npy'], true, '/home/ana')).toBe('/data/crate.npy');
  });
  it('skips Electron and Chromium switches, but not what follows --', () => {
    expect(startupFieldPath(['electron', 'main.js', '--inspect=9229', '--no-sandbox', 'x.json'], false, '/w')).toBe('/w/x.json');
    expect(startupFieldPath(['electron', 'main.js', '--', '-odd-name.json'], false, '/w')).toBe('/w/-odd-name.json');
  });
  it('gives nothing when no field is named', () => {
    expect(startupFieldPath(['electron', 'build/app/main/main.js'], false, '/w')).toBeUndefined();
    expect(startupFieldPath(['/opt/Fieldkiln/fieldkiln', '--enable-logging'], true, '/w')).toBeUndefined();
    expect(startupFieldPath(['electron', '.'], false, '/w')).toBeUndefined();
  });
});
