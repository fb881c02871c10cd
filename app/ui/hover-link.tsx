"use client";

/**
 * Every link of the app: prefetched when the pointer or the keyboard focus reaches it, not when it scrolls into
 * view. Next's default fetched ahead every link on screen, each a server render: 29 on the demo's workspace page
 * (its networks and runs, and the header's links), eight on a run page, all while the page's own data loaded on
 * the same cores. A click after a hover still finds the page ready; a click without one costs one request.
 */
import Link from "next/link";
import { useRouter } from "next/navigation";
import type { ComponentProps } from "react";

/** The app router, or null where none is mounted (a page rendered to a string): there is nothing to fetch into. */
function useMountedRouter(): ReturnType<typeof useRouter> | null {
  try {
    return useRouter();
  } catch {
    return null;
  }
}

export function HoverLink({
  href,
  onMouseEnter,
  onFocus,
  ...rest
}: Omit<ComponentProps<typeof Link>, "href" | "prefetch"> & { href: string }) {
  const router = useMountedRouter();
  return (
    <Link
      {...rest}
      href={href}
      prefetch={false}
      onMouseEnter={(e) => {
        router?.prefetch(href);
        onMouseEnter?.(e);
      }}
      onFocus={(e) => {
        router?.prefetch(href);
        onFocus?.(e);
      }}
    />
  );
}
