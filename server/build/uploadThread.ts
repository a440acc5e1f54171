/**
 * Build step (nuxt.config.ts registers it with Nitro's rollup): bundles the upload thread
 * (server/services/uploads/uploadThread.ts) into its own file, upload-thread.mjs beside the
 * server's index.mjs, with packages left to node_modules, and gives the server its URL as
 * the module "#upload-thread". The thread is a separate bundle so that starting it never
 * loads the server itself (its plugins, the job queue).
 */
import { fileURLToPath } from 'node:url'
import { build } from 'esbuild'

const ENTRY = fileURLToPath(new URL('../services/uploads/uploadThread.ts', import.meta.url))
const VIRTUAL = '\0counterpart-upload-thread'
const FILE = 'upload-thread.mjs'

export function uploadThreadPlugin() {
  return {
    name: 'counterpart-upload-thread',
    async buildStart(this: { emitFile: (f: { type: 'asset', fileName: string, source: string }) => string, addWatchFile?: (id: string) => void }) {
      const out = await build({ entryPoints: [ENTRY], bundle: true, platform: 'node', format: 'esm', target: 'node20', packages: 'external', write: false, logLevel: 'silent' })
      this.emitFile({ type: 'asset', fileName: FILE, source: out.outputFiles[0]!.text })
    },
    resolveId(id: string) {
      return id === '#upload-thread' ? VIRTUAL : null
    },
    load(id: string) {
      // Nitro points import.meta.url at the server's entry (index.mjs), and the thread is emitted beside it.
      return id === VIRTUAL ? `export default new URL('./${FILE}', import.meta.url).href;` : null
    },
  }
}
