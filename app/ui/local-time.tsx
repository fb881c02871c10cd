"use client";

/**
 * A moment in the reader's time zone. The server does not know that zone, so a page it renders (and the browser's
 * first render, which must match it) writes the time in UTC and says so; the reader's own zone follows at once.
 */
import { useSyncExternalStore } from "react";

const never = () => () => {};

/** False while hydrating what the server rendered, true from then on. */
export function useHydrated(): boolean {
  return useSyncExternalStore(
    never,
    () => true,
    () => false,
  );
}

export function LocalTime({ ms, options }: { ms: number; options?: Intl.DateTimeFormatOptions }) {
  const here = useHydrated();
  const d = new Date(ms);
  return (
    <time dateTime={d.toISOString()}>
      {here ? d.toLocaleString("en-GB", options) : `${d.toLocaleString("en-GB", { ...options, timeZone: "UTC" })} UTC`}
    </time>
  );
}
