// A bump allocator over linear memory: the engine allocates its buffers once
// per run and resets between runs. Returns 0 when memory cannot grow.
import { setKernelScratch } from "./kernels";

let top: usize = 0;

/** Cache-line alignment: two threads writing neighbouring buffers (or column groups) never share a line. */
@inline function align64(n: usize): usize {
  return (n + 63) & ~(<usize>63);
}

/** Forget every allocation. */
export function arenaReset(): void {
  top = align64(__heap_base);
  setKernelScratch(0, 0); // the kernel's scratch was in the arena

}

/** Allocate `bytes` zeroed bytes, 64-byte aligned; 0 if memory cannot grow. */
export function arenaAlloc(bytes: usize): usize {
  if (top == 0) arenaReset();
  const ptr = top;
  const end = align64(ptr + bytes);
  const have = <usize>memory.size() << 16;
  if (end > have) {
    const pages = <i32>((end - have + 0xffff) >> 16);
    if (memory.grow(pages) < 0) return 0;
  }
  memory.fill(ptr, 0, end - ptr);
  top = end;
  return ptr;
}
