/**
 * Figures as files, for a paper: each plot of a report also written as a standalone SVG and a PNG (rendered
 * without a browser by resvg, compiled to WebAssembly, with the DejaVu Sans font), and a `figures.md` with one
 * caption line per figure.
 *
 * @module
 */

import { join } from "node:path";
import { initWasm, Resvg } from "@resvg/resvg-wasm";
import "dejavu-fonts-ttf/package.json" with { type: "json" };

let ready: Promise<Uint8Array> | undefined;

/** Loads the rasteriser once, and the font it draws text with. */
function rasteriser(): Promise<Uint8Array> {
  ready ??= (async () => {
    await initWasm(Deno.readFileSync(new URL(import.meta.resolve("@resvg/resvg-wasm/index_bg.wasm"))));
    const fonts = new URL(import.meta.resolve("dejavu-fonts-ttf/package.json"));
    return Deno.readFileSync(new URL("ttf/DejaVuSans.ttf", fonts));
  })();
  return ready;
}

/** An SVG rendered to PNG at twice its size (print resolution for a figure a column wide). */
export async function svgToPng(svg: string): Promise<Uint8Array> {
  const font = await rasteriser();
  const image = new Resvg(svg, {
    fitTo: { mode: "zoom", value: 2 },
    background: "white",
    font: { fontBuffers: [font], defaultFontFamily: "DejaVu Sans", loadSystemFonts: false },
  });
  return image.render().asPng();
}

/** A file name from a label: letters, digits, - and _ only. */
export function slug(text: string): string {
  return text.normalize("NFKD").replace(/[^A-Za-z0-9_-]+/g, "-").replace(/^-+|-+$/g, "") || "x";
}

/** Figures written into one folder, each as NAME.svg and NAME.png, with captions collected for figures.md. */
export class Figures {
  readonly #dir: string;
  readonly #captions: string[] = [];
  readonly files: string[] = [];

  /** @param dir the folder (it exists) */
  constructor(dir: string) {
    this.#dir = dir;
  }

  /**
   * Writes one figure.
   *
   * @param name the file name without extension
   * @param svg the plot
   * @param caption one line saying what it shows, with units
   */
  async add(name: string, svg: string, caption: string): Promise<void> {
    const base = join(this.#dir, name);
    Deno.writeTextFileSync(`${base}.svg`, svg);
    Deno.writeFileSync(`${base}.png`, await svgToPng(svg));
    this.#captions.push(`- **${name}** (${name}.svg, ${name}.png): ${caption}`);
    this.files.push(`${base}.svg`, `${base}.png`);
  }

  /** Writes figures.md and returns every file written. */
  finish(title: string): string[] {
    const path = join(this.#dir, "figures.md");
    Deno.writeTextFileSync(path, `# Figures: ${title}\n\n${this.#captions.join("\n")}\n`);
    return [...this.files, path];
  }
}
