import type { Command } from 'commander'
import { register as registerBackup } from './backup.ts'
import { register as registerCheck } from './check.ts'
import { register as registerInit } from './init.ts'
import { register as registerLabs } from './labs.ts'
import { register as registerPlan } from './plan.ts'
import { register as registerPlans } from './plans.ts'
import { register as registerExport } from './export.ts'
import { register as registerRecords } from './records.ts'
import { register as registerRestore } from './restore.ts'
import { register as registerUsers } from './users.ts'
import { register as registerFarms } from './farms.ts'
import { register as registerStorages } from './storages.ts'
import { register as registerFields } from './fields.ts'
import { register as registerSamples } from './samples.ts'
import { register as registerApplications } from './applications.ts'
import { register as registerDemo } from './demo.ts'
import { register as registerShare } from './share.ts'
import { register as registerServe } from './serve.ts'
import { register as registerCalc } from './calc.ts'

// Registration only: each register() declares a command's options and help, and loads the
// implementation from cli/actions/ when the command runs. Keep these modules light.
export function registerCommands(program: Command): void {
  registerInit(program)
  registerLabs(program)
  registerPlan(program)
  registerPlans(program)
  registerExport(program)
  registerRecords(program)
  registerBackup(program)
  registerRestore(program)
  registerCheck(program)
  registerUsers(program)
  registerFarms(program)
  registerStorages(program)
  registerFields(program)
  registerSamples(program)
  registerApplications(program)
  registerDemo(program)
  registerShare(program)
  registerServe(program)
  registerCalc(program)
}
