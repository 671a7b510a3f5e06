import { fileURLToPath } from 'node:url'
import { runCli } from '../../helpers/cli.ts'

const demo = (name: string) => fileURLToPath(new URL(`../../../examples/demo/${name}`, import.meta.url))

/** Creates `db` with the demo's invented farms and storages (no lab results yet), through the real CLI. */
export async function makeFarmDatabase(db: string): Promise<void> {
  for (const args of [['init'], ['farms', 'import', '--org', 'loamridge', '--org-name', 'Loamridge Nutrient Advisors', demo('farms.csv')], ['storages', 'import', demo('storages.csv')]]) {
    const r = await runCli(['--db', db, '-q', ...args])
    if (r.exitCode !== 0) throw new Error(`pitside ${args.join(' ')} failed (${r.exitCode}): ${r.stderr}`)
  }
}
