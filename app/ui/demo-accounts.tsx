import { DEMO_PASSWORD, DEMO_USERS } from "@/app/lib/demo";

/** Demo mode only (RUNNEL_DEMO=1, set by `npm run demo`): the invented demo team and its documented password. */
export function demoMode(): boolean {
  return process.env.RUNNEL_DEMO === "1";
}

export function DemoAccounts() {
  if (!demoMode()) return null;
  return (
    <section aria-label="Demo accounts" className="rounded border border-dashed border-moss-500 bg-moss-50 p-4 text-sm">
      <h2 className="font-medium text-moss-700">Demo accounts</h2>
      <p className="mt-1 text-stone-600">
        This is a demo of an invented team, Larkspur Microsystems. Every account below has the password{" "}
        <code className="rounded bg-white px-1 font-mono">{DEMO_PASSWORD}</code>.
      </p>
      <div className="overflow-x-auto">
        <table className="mt-2 w-full text-left">
          <thead className="text-xs text-stone-500">
            <tr>
              <th className="py-1 font-normal">e-mail</th>
              <th className="py-1 font-normal">name</th>
              <th className="py-1 font-normal">role in LM-64 edge row</th>
            </tr>
          </thead>
          <tbody>
            {DEMO_USERS.map((u) => (
              <tr key={u.id} className="border-t border-moss-100">
                <td className="py-1 font-mono">{u.email}</td>
                <td className="py-1">{u.name}</td>
                <td className="py-1">{u.role}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </section>
  );
}
