/**
 * /api/auth/* — sign-in with e-mail and password (next-auth credentials), session, sign-out.
 * Anyone may call it. Failed attempts are recorded here; server/middleware/20.signInThrottle.ts
 * refuses attempts that come too soon after repeated failures, per account and per address.
 */
import bcrypt from 'bcryptjs'
import { eq } from 'drizzle-orm'
import CredentialsImport from 'next-auth/providers/credentials'
import { NuxtAuthHandler } from '#auth'
import { users } from '~~/db/schema'
import { recordAttempt } from '../../services/signInThrottle'

const CredentialsProvider = ((CredentialsImport as unknown as { default?: typeof CredentialsImport }).default ?? CredentialsImport)

/** The caller's address as the throttle sees it (the socket, or the trusted proxy's word). */
function requestAddress(): string {
  try {
    return clientAddress(useEvent())
  }
  catch {
    return 'unknown'
  }
}

export default NuxtAuthHandler({
  secret: authSecret(),
  session: { strategy: 'jwt', maxAge: 12 * 60 * 60 },
  // next-auth's token format, with the key derived once (server/utils/sessionToken.ts)
  jwt: { encode: encodeSessionToken, decode: decodeSessionToken },
  pages: { signIn: '/login' },
  providers: [
    CredentialsProvider({
      name: 'Counterpart account',
      credentials: { email: { label: 'E-mail', type: 'email' }, password: { label: 'Password', type: 'password' } },
      async authorize(credentials) {
        const email = String(credentials?.email ?? '').trim().toLowerCase()
        const password = String(credentials?.password ?? '')
        if (!email || !password) throw new Error('Enter your e-mail address and password.')
        if (email.includes('\u0000') || password.includes('\u0000') || email.length > 320) throw new Error('That e-mail address and password do not match an active account.')
        const db = useDb()
        const ip = requestAddress()
        const [user] = await db.select().from(users).where(eq(users.email, email))
        const ok = !!user && user.active && !!user.passwordHash && await bcrypt.compare(password, user.passwordHash)
        await recordAttempt(db, email, ip, ok)
        if (!ok || !user) throw new Error('That e-mail address and password do not match an active account.')
        return { id: String(user.id), email: user.email, name: user.name, role: user.role }
      },
    }),
  ],
  callbacks: {
    jwt({ token, user }) {
      if (user) {
        token.role = (user as { role?: string }).role
        token.uid = Number(user.id)
      }
      return token
    },
    session({ session, token }) {
      if (session.user) {
        Object.assign(session.user, { role: token.role, id: token.uid })
      }
      return session
    },
  },
})
