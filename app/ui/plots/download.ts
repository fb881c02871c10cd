/** Saving what a plot shows: a text file (SVG, CSV) or an SVG rasterised to PNG. Browser only. */

/** Offers `text` as a file named `name`. */
export function downloadText(name: string, mime: string, text: string): void {
  downloadBlob(name, new Blob([text], { type: mime }));
}

export function downloadBlob(name: string, blob: Blob): void {
  const url = URL.createObjectURL(blob);
  const a = document.createElement("a");
  a.href = url;
  a.download = name;
  document.body.appendChild(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
}

/** The SVG document drawn at `scale` × its size onto a canvas, as a PNG blob. */
export async function svgToPng(svg: string, width: number, height: number, scale = 2): Promise<Blob> {
  const url = URL.createObjectURL(new Blob([svg], { type: "image/svg+xml" }));
  try {
    const img = new Image();
    await new Promise<void>((resolve, reject) => {
      img.onload = () => resolve();
      img.onerror = () => reject(new Error("the plot could not be drawn as an image"));
      img.src = url;
    });
    const canvas = document.createElement("canvas");
    canvas.width = width * scale;
    canvas.height = height * scale;
    const g = canvas.getContext("2d")!;
    g.scale(scale, scale);
    g.drawImage(img, 0, 0, width, height);
    return await new Promise<Blob>((resolve, reject) =>
      canvas.toBlob((b) => (b ? resolve(b) : reject(new Error("PNG encoding failed"))), "image/png"),
    );
  } finally {
    URL.revokeObjectURL(url);
  }
}

/** A file name from a plot title: "current out5 over vh" → "current-out5-over-vh". */
export function fileStem(title: string): string {
  return (
    title
      .toLowerCase()
      .replace(/[^a-z0-9µ]+/g, "-")
      .replace(/^-+|-+$/g, "")
      .slice(0, 80) || "plot"
  );
}
