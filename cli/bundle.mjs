/**
 * The command line's prebuilt bundle: cli/counterpart.ts and the engine it imports, compiled
 * once by esbuild into dist/cli/counterpart.mjs (git-ignored), so a run starts without
 * compiling TypeScript. dist/cli/inputs.json lists the source files the bundle was made
 * from; the bundle is stale when any of them is newer than it or gone.
 *
 *   node cli/bundle.mjs          build (npm run build:cli)
 *   node cli/bundle.mjs --if-stale
 */
import { existsSync, mkdirSync, readFileSync, statSync, writeFileSync } from 'node:fs'
import path from 'node:path'
import { fileURLToPath, pathToFileURL } from 'node:url'

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..')
export const bundlePath = path.join(root, 'dist/cli/counterpart.mjs')
const inputsPath = path.join(root, 'dist/cli/inputs.json')

/** True when the bundle is missing or older than one of the sources it was built from. */
export function bundleIsStale() {
  if (!existsSync(bundlePath) || !existsSync(inputsPath)) return true
  const built = statSync(bundlePath).mtimeMs
  let inputs
  try {
    inputs = JSON.parse(readFileSync(inputsPath, 'utf8'))
  } catch {
    return true
  }
  for (const file of inputs) {
    const full = path.join(root, file)
    if (!existsSync(full) || statSync(full).mtimeMs > built) return true
  }
  return false
}

/** Builds the bundle; returns its path. */
export async function buildCliBundle() {
  const { build } = await import('esbuild')
  mkdirSync(path.dirname(bundlePath), { recursive: true })
  const result = await build({
    absWorkingDir: root,
    entryPoints: ['cli/counterpart.ts'],
    outfile: bundlePath,
    bundle: true,
    platform: 'node',
    format: 'esm',
    target: 'node20',
    metafile: true,
    logLevel: 'warning',
    // CommonJS dependencies inside an ES module bundle still call require()
    banner: { js: "import { createRequire as __cpCreateRequire } from 'node:module'; const require = __cpCreateRequire(import.meta.url);" },
  })
  const inputs = Object.keys(result.metafile.inputs).filter((f) => !f.startsWith('node_modules/')).concat('package-lock.json')
  writeFileSync(inputsPath, `${JSON.stringify(inputs, null, 1)}\n`)
  return bundlePath
}

/** Builds the bundle when it is stale. */
export async function ensureCliBundle() {
  if (bundleIsStale()) await buildCliBundle()
  return bundlePath
}

if (process.argv[1] && pathToFileURL(path.resolve(process.argv[1])).href === import.meta.url) {
  const onlyIfStale = process.argv.includes('--if-stale')
  await (onlyIfStale ? ensureCliBundle() : buildCliBundle())
}
