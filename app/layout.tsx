import type { Metadata } from "next";
import { HoverLink } from "@/app/ui/hover-link";
import { connection } from "next/server";
import type { ReactNode } from "react";
import { inter, jetbrains } from "./fonts";
import { mailboxEnabled } from "./lib/mail";
import { requestNotation } from "./lib/notation";
import { AccountSlot } from "./ui/account-slot";
import { NotationProvider } from "./ui/notation";
import { NotationToggle } from "./ui/notation-toggle";
import "./globals.css";

export const metadata: Metadata = {
  title: { default: "Runnel", template: "%s · Runnel" },
  description: "Workbench for weak-inversion transistor networks: write, check, solve, sweep, compare and sign off.",
};

function NavLinks() {
  return (
    <>
      <HoverLink href="/" className="hover:text-moss-700">
        Workspaces
      </HoverLink>
      {mailboxEnabled() ? (
        <HoverLink href="/dev/mailbox" className="hover:text-moss-700 sm:ml-4">
          Mailbox (dev)
        </HoverLink>
      ) : null}
    </>
  );
}

export default async function RootLayout({ children }: { children: ReactNode }) {
  // Every page renders per request: its scripts carry that response's CSP nonce (scripts/lib/next-server.ts).
  await connection();
  const notation = await requestNotation();
  return (
    <html lang="en" className={`${inter.variable} ${jetbrains.variable}`}>
      <body className="min-h-screen font-sans antialiased">
        <NotationProvider initial={notation}>
          <header className="border-b border-stone-300 bg-white">
            <div className="mx-auto flex h-14 max-w-6xl items-center gap-6 px-4">
              <HoverLink href="/" className="flex items-baseline gap-2" aria-label="Runnel home">
                <span className="font-mono text-xl font-bold tracking-tight text-moss-700">runnel</span>
                <span className="hidden text-xs text-stone-500 sm:inline">weak-inversion network workbench</span>
              </HoverLink>
              <nav className="hidden flex-1 text-sm text-stone-600 sm:block">
                <NavLinks />
              </nav>
              <div className="hidden sm:block">
                <NotationToggle />
              </div>
              <div data-slot="account" className="hidden text-sm sm:block">
                <AccountSlot />
              </div>
              {/* Phones: the links and the account corner fold into one menu (no script needed). */}
              <details className="relative ml-auto text-sm sm:hidden" data-slot="header-menu">
                <summary className="cursor-pointer list-none rounded border border-stone-300 px-3 py-1 text-stone-700">
                  Menu
                </summary>
                <div className="absolute right-0 z-20 mt-2 w-64 space-y-3 rounded border border-stone-300 bg-white p-3 shadow-md">
                  <nav className="flex flex-col gap-2 text-stone-600">
                    <NavLinks />
                  </nav>
                  <NotationToggle />
                  <AccountSlot inMenu />
                </div>
              </details>
            </div>
          </header>
          <main className="mx-auto max-w-6xl px-4 py-8">{children}</main>
          <footer className="mx-auto max-w-6xl px-4 pb-8 text-xs text-stone-500">
            Results in Runnel are model estimates. Silicon must be verified by measurement; a foundry&apos;s models and
            design rules take precedence over Runnel&apos;s defaults.
          </footer>
        </NotationProvider>
      </body>
    </html>
  );
}
