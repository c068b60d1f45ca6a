/** The preview scheduler, with a hand-driven bake so the order of events is exact. */
import { describe, expect, it } from 'vitest';
import { createLiveBake } from '../../../app/renderer/live-bake.js';
import type { BakeRequest, BakeResult, Reply } from '../../../app/shared/ipc.js';

function harness() {
  const sent: { request: BakeRequest; resolve(r: Reply<BakeResult>): void }[] = [];
  const shown: string[] = [];
  const log: string[] = [];
  let level = 0;
  const live = createLiveBake({
    settings: () => ({ level, depth: 7, method: 'marching-cubes', budget: 0, lods: 0, minPart: 0, normals: 'field', bounds: null, lipschitz: null, startDepth: null, nonfinite: 'error' }),
    bake: (request) => new Promise((resolve) => sent.push({ request, resolve })),
    onResult: (r) => shown.push(`${r.quality}@${r.level}`),
    onError: (m) => log.push(`error ${m}`),
    onBusy: (q, b) => log.push(`${q} ${b ? 'busy' : 'idle'}`),
    onCancelled: (q) => log.push(`cancelled ${q}`),
  });
  const answer = async (i: number, reply?: Reply<BakeResult>) => {
    const { request } = sent[i];
    sent[i].resolve(reply ?? { ok: true, value: { quality: request.quality, level: request.level } as BakeResult });
    await new Promise((r) => setTimeout(r, 0));
  };
  return { live, sent, shown, log, answer, setLevel: (v: number) => (level = v) };
}

describe('createLiveBake', () => {
  it('keeps one preview in flight while the slider moves, then follows the last position with a full bake', async () => {
    const h = harness();
    h.setLevel(0.1);
    h.live.preview();
    h.setLevel(0.2);
    h.live.preview(); // marks the first one stale
    h.setLevel(0.3);
    h.live.preview();
    expect(h.sent.map((s) => s.request.quality)).toEqual(['preview']);
    h.live.settle(); // slider released at 0.3
    await h.answer(0);
    expect(h.sent.map((s) => `${s.request.quality}@${s.request.level}`)).toEqual(['preview@0.1', 'preview@0.3']);
    await h.answer(1);
    expect(h.sent.map((s) => `${s.request.quality}@${s.request.level}`)).toEqual(['preview@0.1', 'preview@0.3', 'full@0.3']);
    await h.answer(2);
    expect(h.shown).toEqual(['preview@0.1', 'preview@0.3', 'full@0.3']);
    expect(h.live.busy).toBe(false);
  });

  it('never shows an older answer over a newer one, and drops cancelled ones', async () => {
    const h = harness();
    h.setLevel(1);
    h.live.full();
    h.setLevel(2);
    h.live.full();
    await h.answer(1);
    await h.answer(0, { ok: false, error: 'stopped', cancelled: true });
    expect(h.shown).toEqual(['full@2']);
    expect(h.log).toContain('cancelled full');
    await h.answer(0); // a late success of the older request is ignored too
    expect(h.shown).toEqual(['full@2']);
  });

  it('reports errors of the latest request only', async () => {
    const h = harness();
    h.live.full();
    h.live.full();
    await h.answer(0, { ok: false, error: 'old problem' });
    await h.answer(1, { ok: false, error: 'no surface' });
    expect(h.log.filter((l) => l.startsWith('error'))).toEqual(['error no surface']);
  });
});
