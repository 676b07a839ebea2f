/**
 * Progress on stderr, shown only on a terminal (never in pipes, files or CI).
 *
 * @module
 */

/** A progress display: update with the fraction done, then stop. */
export interface Progress {
  update(fraction: number): void;
  stop(): void;
}

/**
 * A progress bar with rate and ETA when stderr is a terminal; undefined otherwise. The bar's library is loaded
 * only then (off a terminal it would cost memory and start-up for nothing).
 *
 * @param what the word in front of the bar
 * @param total the number of items (default: percent)
 * @returns the bar, or undefined off a terminal
 */
export async function progressBar(what: string, total = 100): Promise<Progress | undefined> {
  if (!Deno.stderr.isTerminal()) return undefined;
  const { default: cliProgress } = await import("cli-progress");
  const { default: process } = await import("node:process");
  const bar = new cliProgress.SingleBar({
    format: `${what} [{bar}] {percentage}% | {value}/{total} | {rate}/s | ETA {eta_formatted}`,
    stream: process.stderr,
    hideCursor: true,
    clearOnComplete: true,
    barsize: 30,
    noTTYOutput: false,
  }, cliProgress.Presets.shades_classic);
  const started = performance.now();
  bar.start(total, 0, { rate: "0" });
  return {
    update: (fraction) => {
      const value = Math.round(fraction * total);
      const rate = value / Math.max((performance.now() - started) / 1000, 1e-3);
      bar.update(value, { rate: rate >= 10 ? rate.toFixed(0) : rate.toFixed(1) });
    },
    stop: () => bar.stop(),
  };
}
