/** The server's drawing of a run's first plot (first-look.ts), in the place the view it stands for will take. */
import type { FirstLook } from "./first-look";

export function FirstLookFigure({ look }: { look: FirstLook }) {
  return (
    <figure className="space-y-1 rounded border border-stone-200 bg-white p-3" data-slot="first-look">
      <figcaption className="text-sm text-stone-600">
        {look.title} · <span className="text-stone-500">loading the interactive results…</span>
      </figcaption>
      <div
        role="img"
        aria-label={look.title}
        className={
          look.view === "map" ? "w-full [&>svg]:h-auto [&>svg]:max-w-full" : "w-full [&>svg]:h-auto [&>svg]:w-full"
        }
        dangerouslySetInnerHTML={{ __html: look.svg }}
      />
    </figure>
  );
}
