import type { Metadata } from "next";
import Link from "next/link";
import { connection } from "next/server";
import type { ReactNode } from "react";
import { inter, jetbrains } from "./fonts";
import { mailboxEnabled } from "./lib/mail";
import { AccountSlot } from "./ui/account-slot";
import "./globals.css";

export const metadata: Metadata = {
  title: { default: "Runnel", template: "%s · Runnel" },
  description: "Workbench for weak-inversion transistor networks: write, check, solve, sweep, compare and sign off.",
};

export default async function RootLayout({ children }: { children: ReactNode }) {
  // Every page renders per request: its scripts carry that response's CSP nonce (scripts/lib/next-server.ts).
  await connection();
  return (
    <html lang="en" className={`${inter.variable} ${jetbrains.variable}`}>
      <body className="min-h-screen font-sans antialiased">
        <header className="border-b border-stone-300 bg-white">
          <div className="mx-auto flex h-14 max-w-6xl items-center gap-6 px-4">
            <Link href="/" className="flex items-baseline gap-2" aria-label="Runnel home">
              <span className="font-mono text-xl font-bold tracking-tight text-moss-700">runnel</span>
              <span className="hidden text-xs text-stone-500 sm:inline">weak-inversion network workbench</span>
            </Link>
            <nav className="flex-1 text-sm text-stone-600">
              <Link href="/" className="hover:text-moss-700">
                Workspaces
              </Link>
              {mailboxEnabled() ? (
                <Link href="/dev/mailbox" className="ml-4 hover:text-moss-700">
                  Mailbox (dev)
                </Link>
              ) : null}
            </nav>
            <div data-slot="account" className="text-sm">
              <AccountSlot />
            </div>
          </div>
        </header>
        <main className="mx-auto max-w-6xl px-4 py-8">{children}</main>
        <footer className="mx-auto max-w-6xl px-4 pb-8 text-xs text-stone-500">
          Results in Runnel are model estimates. Silicon must be verified by measurement; a foundry&apos;s models and
          design rules take precedence over Runnel&apos;s defaults.
        </footer>
      </body>
    </html>
  );
}
