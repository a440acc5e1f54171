/**
 * /api/auth/* — sign-in with e-mail and password (next-auth credentials), session, sign-out.
 * Anyone may call it. Failed attempts are throttled per account and per address.
 */
import bcrypt from 'bcryptjs'
import { eq } from 'drizzle-orm'
import CredentialsImport from 'next-auth/providers/credentials'
import { NuxtAuthHandler } from '#auth'
import { users } from '~~/db/schema'
import { recordAttempt, throttleMessage } from '../../services/signInThrottle'

const CredentialsProvider = ((CredentialsImport as unknown as { default?: typeof CredentialsImport }).default ?? CredentialsImport)

function requestAddress(): string {
  try {
    return getRequestIP(useEvent(), { xForwardedFor: true }) ?? 'unknown'
  }
  catch {
    return 'unknown'
  }
}

export default NuxtAuthHandler({
  secret: process.env.NUXT_AUTH_SECRET || useRuntimeConfig().authSecret,
  session: { strategy: 'jwt', maxAge: 12 * 60 * 60 },
  pages: { signIn: '/login' },
  providers: [
    CredentialsProvider({
      name: 'Counterpart account',
      credentials: { email: { label: 'E-mail', type: 'email' }, password: { label: 'Password', type: 'password' } },
      async authorize(credentials) {
        const email = String(credentials?.email ?? '').trim().toLowerCase()
        const password = String(credentials?.password ?? '')
        if (!email || !password) throw new Error('Enter your e-mail address and password.')
        const db = useDb()
        const ip = requestAddress()
        const refused = await throttleMessage(db, email, ip)
        if (refused) throw new Error(refused)
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
