/**
 * Loads the UV layout module the texture stage needs: watlas (xatlas in WebAssembly), its .wasm read
 * from node_modules. Shared by the CLI (`bake --texture`) and the desktop app's bake worker, which
 * hand it to core's bakeField as `unwrapper`.
 */
import type { UvAtlasModule } from '../../core/texture/unwrap-mesh.js';

let loading: Promise<UvAtlasModule> | undefined;

/**
 * watlas after `await Initialize()`, loaded on first use only (textures are optional) and kept for
 * later calls in the same process or worker. A failed load is not kept, so a later call tries again.
 *
 * @example
 * const result = await bakeField(field, { texture: 1024, unwrapper: await loadUnwrapper(), deflate: (b) => deflateSync(b) });
 */
export function loadUnwrapper(): Promise<UvAtlasModule> {
  loading ??= (async () => {
    const watlas = await import('watlas');
    await watlas.Initialize();
    return watlas;
  })().catch((e: unknown) => {
    loading = undefined;
    throw e;
  });
  return loading;
}
