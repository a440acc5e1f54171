/**
 * Build step for a worker thread (nuxt.config.ts registers one per thread with Nitro's rollup):
 * bundles the thread's entry into its own file beside the server's index.mjs, with packages
 * left to node_modules, and gives the server that file's URL as the module "#<name>".
 * A thread is a separate bundle so that starting it never loads the server itself (its
 * plugins, the job queue). Threads: "upload-thread" (server/services/uploads/uploadThread.ts,
 * used by runUploadCheck.ts) and "engine-thread" (server/services/engineThread/entry.ts, used
 * by server/utils/enginePool.ts).
 */
import { fileURLToPath } from 'node:url'
import { build } from 'esbuild'

export function threadBundlePlugin(name: 'upload-thread' | 'engine-thread', entryFromRoot: string) {
  const entry = fileURLToPath(new URL(`../../${entryFromRoot}`, import.meta.url))
  const virtual = `\0counterpart-${name}`
  const file = `${name}.mjs`
  return {
    name: `counterpart-${name}`,
    async buildStart(this: { emitFile: (f: { type: 'asset', fileName: string, source: string }) => string }) {
      const out = await build({ entryPoints: [entry], bundle: true, platform: 'node', format: 'esm', target: 'node20', packages: 'external', write: false, logLevel: 'silent' })
      this.emitFile({ type: 'asset', fileName: file, source: out.outputFiles[0]!.text })
    },
    resolveId(id: string) {
      return id === `#${name}` ? virtual : null
    },
    load(id: string) {
      // Nitro points import.meta.url at the server's entry (index.mjs), and the thread is emitted beside it.
      return id === virtual ? `export default new URL('./${file}', import.meta.url).href;` : null
    },
  }
}
