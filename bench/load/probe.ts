/**
 * `npx tsx bench/load/probe.ts`: one user, each request kind of the load mix in turn, one at a
 * time: median server round trip and response size per kind. Finds where the time goes
 * before a full `npm run bench:load` (same stack, same environment variables).
 */
import { startStack } from './stack'
import { act, makeAccounts, MIX, prepareUser } from './users'

const ROUNDS = Number(process.env.COUNTERPART_PROBE_ROUNDS ?? 15)

async function main() {
  const stack = await startStack()
  try {
    const [email] = await makeAccounts(stack.databaseUrl, 1)
    const user = await prepareUser(stack.url, email!, 0)
    let seed = 7
    const r = () => ((seed = (seed * 16807) % 2147483647) / 2147483647)
    for (const [action] of MIX) {
      const times: number[] = []
      let bytes = 0
      for (let i = 0; i < ROUNDS; i++) {
        const t0 = performance.now()
        const res = await act(user, action, r)
        times.push(performance.now() - t0)
        bytes = JSON.stringify(res.body).length
        if (res.status >= 400) throw new Error(`${action}: ${res.status} ${JSON.stringify(res.body).slice(0, 200)}`)
      }
      times.sort((a, b) => a - b)
      console.log(`${action.padEnd(11)} median ${times[times.length >> 1]!.toFixed(1).padStart(7)} ms  min ${times[0]!.toFixed(1).padStart(7)} ms  response ${(bytes / 1024).toFixed(1)} KB`)
    }
  }
  finally {
    await stack.stop()
  }
}

main().catch((e) => {
  console.error(e)
  process.exit(1)
})
