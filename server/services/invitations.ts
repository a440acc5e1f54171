/** Invitation tokens: random, stored only as a SHA-256 hash, valid for INVITATION_TTL_HOURS. */
import { createHash, randomBytes } from 'node:crypto'

export const INVITATION_TTL_HOURS = 72

export function newToken(): { token: string, tokenHash: string } {
  const token = randomBytes(24).toString('base64url')
  return { token, tokenHash: hashToken(token) }
}

export function hashToken(token: string): string {
  return createHash('sha256').update(token).digest('hex')
}

export function invitationMail(name: string, role: string, link: string) {
  return {
    subject: 'Your Counterpart account is ready to set up',
    text: [
      `Hello ${name},`,
      '',
      `You have been invited to Counterpart as ${/^[aeiou]/.test(role) ? 'an' : 'a'} ${role}.`,
      'Choose your password here (the link works once and expires in 72 hours):',
      '',
      link,
      '',
      'If you were not expecting this, ignore this message.',
    ].join('\n'),
  }
}
