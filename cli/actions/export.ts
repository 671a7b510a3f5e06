import { writeFile, rename } from 'node:fs/promises'
import { dirname, basename, join } from 'node:path'
import { AppError } from '../../shared/errors.ts'
import type { ActionModule } from '../lazy.ts'
import { note } from '../output.ts'
import { withAdvisorDb } from './advisor-db.ts'
import { plansCsv } from './plan.ts'
import { planIdOf, requirePlan } from './plans.ts'

/** Writes text to a file through a temporary name and a rename, so that a failed write leaves no half file. */
export async function writeFileAtomic(path: string, text: string): Promise<void> {
  const tmp = join(dirname(path), `.${basename(path)}.${process.pid}.tmp`)
  try {
    await writeFile(tmp, text)
    await rename(tmp, path)
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code
    throw new AppError(code === 'ENOENT' ? 'not_found' : 'io', `${path}: cannot write (${code ?? (error as Error).message})`)
  }
}

export const run: ActionModule['run'] = async ({ args, options, globals: g }) => {
  const id = planIdOf(args[0])
  const format = options.format as 'csv' | 'json'
  const plan = await withAdvisorDb(g.db, 'read', ({ db }) => requirePlan(db, id))
  const text = format === 'csv' ? plansCsv([plan.result]) : JSON.stringify(plan.result, null, 2) + '\n'
  if (options.out) {
    await writeFileAtomic(options.out, text)
    note(g, `wrote plan ${id} (${plan.farm} ${plan.season} version ${plan.version}) to ${options.out}`)
  } else process.stdout.write(text)
}
