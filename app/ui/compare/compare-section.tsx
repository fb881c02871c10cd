import type { ReactNode } from "react";

/** A section of the compare page: its heading, what stands beside the heading (counts, a switch), then its body. */
export function CompareSection({
  id,
  title,
  beside,
  className = "space-y-2",
  slot,
  children,
}: {
  id: string;
  title: string;
  beside?: ReactNode;
  className?: string;
  slot?: string;
  children: ReactNode;
}) {
  return (
    <section aria-labelledby={id} className={className} data-slot={slot}>
      <div className="flex items-baseline gap-4">
        <h2 id={id} className="text-lg font-semibold">
          {title}
        </h2>
        {beside}
      </div>
      {children}
    </section>
  );
}
