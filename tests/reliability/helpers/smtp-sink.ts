import { createServer, type Server, type Socket } from 'node:net'

export interface ReceivedMail {
  from: string
  /** Every RCPT TO of the SMTP envelope: who the message is actually delivered to. */
  recipients: string[]
  /** The raw message (headers and body) after DATA. */
  data: string
}

/**
 * A minimal SMTP server on 127.0.0.1 that accepts everything and records each envelope (RFC 5321
 * §3.3: MAIL FROM, RCPT TO, DATA). No TLS is offered, so clients must be told not to require it.
 */
export async function startSmtpSink(): Promise<{ port: number; mails: ReceivedMail[]; close(): Promise<void> }> {
  const mails: ReceivedMail[] = []
  const sockets = new Set<Socket>()
  const server: Server = createServer((socket) => {
    sockets.add(socket)
    socket.on('close', () => sockets.delete(socket))
    let buffer = ''
    let inData = false
    let current: ReceivedMail = { from: '', recipients: [], data: '' }
    const reply = (line: string) => socket.write(line + '\r\n')
    reply('220 sink.test ESMTP')
    socket.on('data', (chunk) => {
      buffer += chunk.toString('latin1')
      for (;;) {
        if (inData) {
          const end = buffer.indexOf('\r\n.\r\n')
          if (end < 0) return
          current.data = buffer.slice(0, end).replace(/^\.\./gm, '.')
          buffer = buffer.slice(end + 5)
          inData = false
          mails.push(current)
          current = { from: '', recipients: [], data: '' }
          reply('250 queued')
          continue
        }
        const eol = buffer.indexOf('\r\n')
        if (eol < 0) return
        const line = buffer.slice(0, eol)
        buffer = buffer.slice(eol + 2)
        const verb = line.slice(0, 4).toUpperCase()
        if (verb === 'EHLO' || verb === 'HELO') reply('250 sink.test')
        else if (verb === 'MAIL') (current.from = line.replace(/^MAIL FROM:\s*/i, '')), reply('250 ok')
        else if (verb === 'RCPT') current.recipients.push(line.replace(/^RCPT TO:\s*/i, '')), reply('250 ok')
        else if (verb === 'DATA') (inData = true), reply('354 go ahead')
        else if (verb === 'QUIT') reply('221 bye'), socket.end()
        else if (verb === 'RSET') (current = { from: '', recipients: [], data: '' }), reply('250 ok')
        else reply('250 ok')
      }
    })
  })
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve))
  const { port } = server.address() as { port: number }
  return {
    port,
    mails,
    close: () =>
      new Promise<void>((resolve) => {
        for (const s of sockets) s.destroy()
        server.close(() => resolve())
      }),
  }
}
