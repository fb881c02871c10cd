/**
 * Bench data on the run page's own plots: the network's measurements and,
 * once one is chosen, its overlay against this run
 * (GET /api/measurements/[id]/overlay?run=RUN), which gives the measured
 * points to draw on the matched curve and the agreement figures. The route's
 * refusal (a run that does not cover the measurement's x, …) is kept as its
 * one-line message.
 */
import { useMemo, useState } from "react";
import useSWR from "swr";
import type { Overlay } from "@/app/lib/review/measurement-store";
import { getJson } from "@/app/ui/fetch";
import type { Marks } from "@/app/ui/plots/plot-types";

interface Listed {
  id: string;
  name: string;
  rows: number;
  xName: string;
  xUnit: string;
  series: { name: string; unit: string }[];
}

const NONE: Listed[] = [];

export type OverlaySeries = Overlay["series"][number];

export interface BenchData {
  measurements: Listed[];
  chosen: Listed | null;
  choose: (id: string) => void;
  overlay: Overlay | undefined;
  /** The overlay route's one-line refusal, when it refused. */
  error: string | null;
  loading: boolean;
}

/** The network's measurements and the chosen one's overlay on `runId`; state lives in the caller (shared by the views). */
export function useBenchData(networkId: string, runId: string): BenchData {
  const list = useSWR<{ measurements: Listed[] }>(`/api/networks/${networkId}/measurements`, getJson, {
    revalidateOnFocus: false,
  });
  const [chosenId, setChosenId] = useState("");
  const measurements = list.data?.measurements ?? NONE;
  const chosen = measurements.find((m) => m.id === chosenId) ?? null;
  const overlay = useSWR<Overlay>(chosen ? `/api/measurements/${chosen.id}/overlay?run=${runId}` : null, getJson, {
    shouldRetryOnError: false,
    revalidateOnFocus: false,
  });
  const data = chosen ? overlay.data : undefined;
  const error = chosen && overlay.error ? (overlay.error as Error).message : null;
  const loading = !!chosen && overlay.isLoading;
  // One object per change, so plots that depend on it are redrawn only when the bench data changes.
  return useMemo(
    () => ({ measurements, chosen, choose: setChosenId, overlay: data, error, loading }),
    [measurements, chosen, data, error, loading],
  );
}

/** Unit symbol of a CSV unit in SI ("nA" → "A", "1" → ""): the overlay's values are in SI units. */
export function siUnit(unit: string): string {
  if (unit === "1") return "";
  const base = unit.slice(-1);
  return base === "V" || base === "A" || base === "K" ? base : unit;
}

/** Legend label of a measured series: "measured: NAME", with the series when the file has several. */
export function measuredLabel(bench: BenchData, s: OverlaySeries): string {
  const name = bench.chosen?.name ?? "bench data";
  return (bench.overlay?.series.length ?? 0) > 1 ? `measured: ${name} (${s.name})` : `measured: ${name}`;
}

/** The measured points of `series` as points-only marks for LinePlot. */
export function measuredMarks(bench: BenchData, series: OverlaySeries[]): Marks[] {
  return series.map((s) => ({
    label: measuredLabel(bench, s),
    x: s.measured.x,
    y: s.measured.y,
    colour: "measured", // --color-measured: ember, apart from the moss of the simulated curve
  }));
}
