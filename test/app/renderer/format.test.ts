/** The window's figures and words. */
import { describe, expect, it } from 'vitest';
import { formatBytes, formatCount, formatLength, formatSeconds, formatValue, sentence, stageWords } from '../../../app/renderer/format.js';

describe('format', () => {
  it('writes figures the way the window shows them', () => {
    expect(formatCount(11188)).toBe('11,188');
    expect(formatBytes(999)).toBe('999 B');
    expect(formatBytes(655_900)).toBe('655.9 kB'); // SI prefixes, 1 kB = 1000 B
    expect(formatBytes(4_161_072)).toBe('4.16 MB');
    expect(formatLength(0.7)).toBe('70 cm');
    expect(formatLength(2)).toBe('2 m');
    expect(formatLength(0.004)).toBe('4 mm');
    expect(formatValue(-0.05999999865889549)).toBe('-0.06');
    expect(formatValue(null)).toBe('—');
    expect(formatValue(123456)).toBe('1.235e+5');
    expect(formatSeconds(0.0123)).toBe('12 ms');
    expect(formatSeconds(1.234)).toBe('1.23 s');
  });
  it('names stages in plain words, keeping unknown ones readable', () => {
    expect(stageWords('sample')).toBe('Sampling the field');
    expect(stageWords('simplify-lods')).toBe('Simplify lods');
  });
  it('raises the first letter of a message, but not of a file name', () => {
    expect(sentence('no surface: the field does not cross level 0')).toBe('No surface: the field does not cross level 0');
    expect(sentence('ball.onnx: file not found')).toBe('ball.onnx: file not found');
    expect(sentence('sphere_sdf: odd')).toBe('sphere_sdf: odd');
  });
});
