"use client";

/**
 * The reader's notation for values with a unit (SI prefixes or plain
 * scientific, app/lib/format.ts) for every client component, and the header's
 * toggle. The choice is kept in a cookie, so server-rendered pages (compare,
 * threads) write values the same way; the layout seeds the provider from it.
 */
import { useRouter } from "next/navigation";
import { createContext, useCallback, useContext, useMemo, useState, type ReactNode } from "react";
import { formatValue, NOTATION_COOKIE, type Notation } from "@/app/lib/format";

interface NotationState {
  notation: Notation;
  setNotation(n: Notation): void;
}

const NotationContext = createContext<NotationState>({ notation: "si", setNotation: () => {} });

export function NotationProvider({ initial, children }: { initial: Notation; children: ReactNode }) {
  const [notation, set] = useState<Notation>(initial);
  const router = useRouter();
  const setNotation = useCallback(
    (n: Notation) => {
      document.cookie = `${NOTATION_COOKIE}=${n}; path=/; max-age=31536000; samesite=lax`;
      set(n);
      router.refresh();
    },
    [router],
  );
  const value = useMemo(() => ({ notation, setNotation }), [notation, setNotation]);
  return <NotationContext.Provider value={value}>{children}</NotationContext.Provider>;
}

/** The reader's notation and its setter. */
export function useNotation(): NotationState {
  return useContext(NotationContext);
}

/** `fmt(value, unit, digits?)`: formatValue in the reader's notation. */
export type ValueFormatter = (
  value: number | null | undefined,
  unit: string | null | undefined,
  digits?: number,
) => string;

/** A formatter bound to the reader's notation (stable while the notation does not change). */
export function useFormat(): ValueFormatter {
  const { notation } = useNotation();
  return useCallback(
    (value: number | null | undefined, unit: string | null | undefined, digits?: number) =>
      formatValue(value, unit, { notation, digits }),
    [notation],
  );
}
