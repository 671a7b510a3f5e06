import { migrateToLatest } from '../../shared/db/migrations.ts'
import { openWriter } from '../../shared/db/open-database.ts'
import type { ActionModule } from '../lazy.ts'
import { note, printJson } from '../output.ts'

export const run: ActionModule['run'] = async ({ globals: g }) => {
  const { db, close } = openWriter(g.db)
  try {
    const { applied, latest } = await migrateToLatest(db)
    if (g.json) printJson({ database: g.db, applied, schema: latest })
    else if (applied.length === 0) note(g, `${g.db}: already at the latest schema (${latest}); nothing to do`)
    else note(g, `${g.db}: applied ${applied.length} migration(s): ${applied.join(', ')}`)
  } finally {
    await close()
  }
}
