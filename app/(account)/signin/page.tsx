import type { Metadata } from "next";
import { HoverLink } from "@/app/ui/hover-link";
import { redirect } from "next/navigation";
import { getActor, safeNext } from "@/app/lib/auth";
import { DemoAccounts } from "@/app/ui/demo-accounts";
import { SignInForm } from "./sign-in-form";

export const metadata: Metadata = { title: "Sign in" };

export default async function SignInPage({ searchParams }: { searchParams: Promise<{ next?: string | string[] }> }) {
  const next = safeNext((await searchParams).next);
  if (await getActor()) redirect(next);
  return (
    <div className="mx-auto max-w-md space-y-6">
      <h1 className="text-2xl font-semibold">Sign in</h1>
      <SignInForm next={next} />
      <p className="text-sm text-stone-600">
        No account yet?{" "}
        <HoverLink
          href={`/signup${next !== "/" ? `?next=${encodeURIComponent(next)}` : ""}`}
          className="text-moss-700 underline"
        >
          Create one
        </HoverLink>
        . To join a team&apos;s workspace, use the link in your invitation e-mail.
      </p>
      <DemoAccounts />
    </div>
  );
}
