import type { Command } from 'commander'
import { lazyAction } from '../lazy.ts'

export function register(program: Command): void {
  program
    .command('serve')
    .description('start the read-only viewer (sign-in, farms, plans, share links) over the database')
    .option('--port <port>', 'port to listen on (0 picks a free one)', '8080')
    .option('--host <address>', 'address to listen on', '127.0.0.1')
    .action(lazyAction(() => import('../actions/serve.ts')))
}
