/**
 * `npm run cli -- ...`: runs the prebuilt bundle (cli/bundle.mjs), building it first when a
 * source file changed since it was built. The bundle reads process.argv as the command does.
 */
import { bundleIsStale, bundlePath, buildCliBundle } from './bundle.mjs'
import { pathToFileURL } from 'node:url'

if (bundleIsStale()) await buildCliBundle()
await import(pathToFileURL(bundlePath).href)
