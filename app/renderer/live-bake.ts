/**
 * Keeps the preview in step with the controls. While a slider moves, coarse previews follow it, at
 * most one in flight (a move during a preview marks it stale; the next preview starts when that one
 * lands). When the slider stops, a full bake follows the last preview. Any newer request cancels
 * the older one in the main process; cancelled answers are dropped here.
 */
import type { BakeQuality, BakeRequest, BakeResult, BakeSettings, Reply } from '../shared/ipc.js';

/** What {@link createLiveBake} needs from the window. */
export interface LiveBakeHooks {
  /** The controls' settings now. */
  settings(): BakeSettings;
  /** Sends a bake (window.api.bake). */
  bake(request: BakeRequest): Promise<Reply<BakeResult>>;
  /** A result newer than anything shown so far. */
  onResult(result: BakeResult): void;
  /** A request failed (not cancelled). */
  onError(message: string, quality: BakeQuality): void;
  /** A full bake started or ended (for the progress bar). */
  onBusy(quality: BakeQuality, busy: boolean): void;
  /** A request came back cancelled (superseded or stopped). */
  onCancelled(quality: BakeQuality): void;
}

/** The scheduler's three requests. */
export interface LiveBake {
  /** A control is moving: show a coarse preview soon. */
  preview(): void;
  /** The control stopped: bake at full depth (after the preview in flight, if any). */
  settle(): void;
  /** Bake at full depth now. */
  full(): void;
  /** True while any bake is in flight. */
  readonly busy: boolean;
}

/**
 * Creates the scheduler over `hooks` (the window's settings, window.api.bake, and what to do with
 * answers).
 *
 * @example
 * const live = createLiveBake({ settings, bake: (r) => window.api.bake(r), onResult: show, onError, onBusy, onCancelled });
 * slider.addEventListener('input', () => live.preview());
 * slider.addEventListener('change', () => live.settle());
 */
export function createLiveBake(hooks: LiveBakeHooks): LiveBake {
  let seq = 0;
  let shownSeq = 0;
  let previewInFlight = false;
  let previewStale = false;
  let fullAfterPreview = false;
  let inFlight = 0;

  const send = (quality: BakeQuality) => {
    const mine = ++seq;
    inFlight++;
    if (quality === 'full') hooks.onBusy('full', true);
    const request: BakeRequest = { ...hooks.settings(), quality };
    void hooks
      .bake(request)
      .then((reply) => {
        if (reply.ok) {
          if (mine > shownSeq) {
            shownSeq = mine;
            hooks.onResult(reply.value);
          }
        } else if (reply.cancelled) {
          hooks.onCancelled(quality);
        } else if (mine === seq) {
          hooks.onError(reply.error, quality);
        }
      })
      .catch((e: unknown) => hooks.onError(e instanceof Error ? e.message : String(e), quality))
      .finally(() => {
        inFlight--;
        if (quality === 'full') hooks.onBusy('full', false);
        if (quality === 'preview') {
          previewInFlight = false;
          if (previewStale) {
            previewStale = false;
            startPreview();
          } else if (fullAfterPreview) {
            fullAfterPreview = false;
            send('full');
          }
        }
      });
  };

  const startPreview = () => {
    previewInFlight = true;
    send('preview');
  };

  return {
    preview() {
      fullAfterPreview = false;
      if (previewInFlight) previewStale = true;
      else startPreview();
    },
    settle() {
      if (previewInFlight) fullAfterPreview = true;
      else send('full');
    },
    full() {
      previewStale = false;
      fullAfterPreview = false;
      send('full');
    },
    get busy() {
      return inFlight > 0;
    },
  };
}
