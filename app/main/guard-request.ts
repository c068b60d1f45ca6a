/**
 * The gate every IPC request passes before a handler sees it: the sender must be the app's own
 * window, and the payload must pass its channel's validator (app/shared/ipc.ts). A refused request
 * gets a plain-words reply and reaches no handler, so it has no side effects.
 *
 * No electron import: main.ts supplies the sender check, tests call the gate directly.
 */
import { VALIDATORS, type Channel, type Reply } from '../shared/ipc.js';

/** A handler after the gate: takes the sender's trust and the raw payload. */
export type GuardedHandler = (senderTrusted: boolean, payload: unknown) => Promise<Reply<unknown>>;

/**
 * Wraps `handler` for `channel`: refuses untrusted senders and invalid payloads, else calls it.
 *
 * @example
 * const gated = guardRequest(CHANNELS.bake, handlers.bake);
 * ipcMain.handle(CHANNELS.bake, (event, payload) => gated(isTrustedSender(factsOf(event), win.webContents.id), payload));
 */
export function guardRequest(channel: Channel, handler: (payload: never) => Promise<Reply<unknown>>): GuardedHandler {
  const validate = VALIDATORS[channel];
  if (!validate) throw new Error(`guardRequest: no validator for channel '${channel}'`);
  return async (senderTrusted, payload) => {
    if (!senderTrusted) return { ok: false, error: 'refused: the request did not come from the Fieldkiln window' };
    const problem = validate(payload);
    if (problem !== null) return { ok: false, error: `refused: ${problem}` };
    try {
      return await handler(payload as never);
    } catch (e) {
      return { ok: false, error: `something went wrong inside Fieldkiln: ${e instanceof Error ? e.message : String(e)}` };
    }
  };
}
