/** At start-up: refuse to run without an adequate session secret (see server/utils/authSecret.ts). */
export default defineNitroPlugin(() => {
  try {
    authSecret()
  }
  catch (error) {
    console.error((error as Error).message)
    process.exit(1)
  }
})
