/**
 * The engine's helper thread: a second instance of the module on the engine's shared memory, running the
 * module's job loop (it takes half of each large matrix product) until the engine stops it.
 *
 * @module
 */

/// <reference lib="deno.worker" />

self.onmessage = async (event: MessageEvent<{ module: WebAssembly.Module; memory: WebAssembly.Memory }>) => {
  const { module, memory } = event.data;
  const instance = await WebAssembly.instantiate(module, { env: { memory, abort() {} } });
  self.postMessage("ready");
  try {
    (instance.exports.helperLoop as () => void)();
  } catch {
    // a trap in a block: tell the caller (it must not wait for the block forever), and stop
    (instance.exports.helperFailed as () => void)();
  }
  self.close();
};
