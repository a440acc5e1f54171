/** GET /api/me — any signed-in user: who I am now (role as stored, not as cached in the session). */
export default defineEventHandler(async event => requireUser(event))
