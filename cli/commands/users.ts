import { Option, type Command } from 'commander'
import { lazyAction } from '../lazy.ts'

const collect = (value: string, previous: string[]) => [...previous, value]
const load = () => import('../actions/users.ts')

export function register(program: Command): void {
  const users = program.command('users').description('manage the accounts that may sign in to the viewer')

  users
    .command('add')
    .description('create an account (the password is read from standard input)')
    .requiredOption('--email <email>', 'e-mail address used to sign in')
    .requiredOption('--name <name>', "the person's name")
    .addOption(new Option('--role <role>', 'advisor: every farm of the organization; client: only granted farms').choices(['advisor', 'client']).makeOptionMandatory())
    .option('--farm <code>', 'farm a client may see (repeat for several)', collect, [])
    .option('--org <code>', 'organization code (default: the only organization in the database)')
    .option('--org-name <name>', 'create the organization given by --org with this name if it does not exist')
    .option('--password-stdin', 'read the password from standard input', false)
    .action(lazyAction(async () => ({ run: (await load()).runAdd })))

  users
    .command('passwd')
    .description("replace an account's password (read from standard input)")
    .argument('<email>', 'the account')
    .option('--password-stdin', 'read the password from standard input', false)
    .action(lazyAction(async () => ({ run: (await load()).runPasswd })))

  users
    .command('disable')
    .description('stop an account from signing in (its open sessions end too)')
    .argument('<email>', 'the account')
    .action(lazyAction(async () => ({ run: (await load()).runDisable })))

  users
    .command('enable')
    .description('let a disabled account sign in again')
    .argument('<email>', 'the account')
    .action(lazyAction(async () => ({ run: (await load()).runEnable })))

  users
    .command('list')
    .description('list the accounts, their roles and farms')
    .action(lazyAction(async () => ({ run: (await load()).runList })))
}
