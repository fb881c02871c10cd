/** The part of subset-font's API scripts/subset-fonts.ts uses (the package ships no types). */
declare module "subset-font" {
  interface SubsetOptions {
    targetFormat?: "sfnt" | "woff" | "woff2";
    keepFeatures?: string[];
    variationAxes?: Record<string, number | { min: number; max: number; default?: number }>;
    noHinting?: boolean;
  }
  export default function subsetFont(buffer: Buffer, text: string, options?: SubsetOptions): Promise<Buffer>;
}
