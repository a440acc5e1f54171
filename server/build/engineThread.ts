/**
 * Build step (nuxt.config.ts registers it with Nitro's rollup): bundles the engine thread
 * (server/services/engineThread/entry.ts) into engine-thread.mjs beside the server's
 * index.mjs, packages left to node_modules, and gives the server its URL as the module
 * "#engine-thread" (server/utils/enginePool.ts). Same shape as the upload thread's step.
 */
import { fileURLToPath } from 'node:url'
import { build } from 'esbuild'

const ENTRY = fileURLToPath(new URL('../services/engineThread/entry.ts', import.meta.url))
const VIRTUAL = '\0counterpart-engine-thread'
const FILE = 'engine-thread.mjs'

export function engineThreadPlugin() {
  return {
    name: 'counterpart-engine-thread',
    async buildStart(this: { emitFile: (f: { type: 'asset', fileName: string, source: string }) => string }) {
      const out = await build({ entryPoints: [ENTRY], bundle: true, platform: 'node', format: 'esm', target: 'node20', packages: 'external', write: false, logLevel: 'silent' })
      this.emitFile({ type: 'asset', fileName: FILE, source: out.outputFiles[0]!.text })
    },
    resolveId(id: string) {
      return id === '#engine-thread' ? VIRTUAL : null
    },
    load(id: string) {
      // Nitro points import.meta.url at the server's entry (index.mjs), and the thread is emitted beside it.
      return id === VIRTUAL ? `export default new URL('./${FILE}', import.meta.url).href;` : null
    },
  }
}
