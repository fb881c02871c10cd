import type { Metadata } from "next";
import { HoverLink } from "@/app/ui/hover-link";
import { redirect } from "next/navigation";
import { getActor, safeNext } from "@/app/lib/auth";
import { PASSWORD_MIN } from "@/app/lib/passwords";
import { SignUpForm } from "./sign-up-form";

export const metadata: Metadata = { title: "Create an account" };

export default async function SignUpPage({ searchParams }: { searchParams: Promise<{ next?: string | string[] }> }) {
  const next = safeNext((await searchParams).next);
  if (await getActor()) redirect(next);
  return (
    <div className="mx-auto max-w-md space-y-6">
      <h1 className="text-2xl font-semibold">Create an account</h1>
      <SignUpForm next={next} minLength={PASSWORD_MIN} />
      <p className="text-sm text-stone-600">
        Have an account?{" "}
        <HoverLink href="/signin" className="text-moss-700 underline">
          Sign in
        </HoverLink>
        .
      </p>
    </div>
  );
}
