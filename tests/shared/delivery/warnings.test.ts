/**
 * Warnings in plain words: each known technical sentence (the exact text the designs write,
 * copied from server/engine) gets a plain message, and keeps the technical text as its detail.
 * Expected texts are known by construction (they are this file's own rules).
 */
import { describe, expect, it } from 'vitest'
import { explainWarning, warningText } from '../../../shared/delivery/warnings'

describe('explainWarning', () => {
  it('states the Newey-West lag in words and gives the rule of thumb as the detail', () => {
    const w = explainWarning('Newey-West errors use a lag of 4 periods (the usual rule of thumb for a series of 156 periods); set its.hacLag to choose another')
    expect(w.message).toBe('The standard errors allow each period to be related to the 4 periods before it: a standard choice for a series of 156 periods.')
    expect(w.detail).toBe('its.hacLag not given: Newey-West lag 4 from the rule of thumb floor(4 (N/100)^(2/9)) with N = 156. Set its.hacLag in the run options to choose another lag.')
    // the rule of thumb itself: floor(4 * (156/100)^(2/9)) = floor(4.418...) = 4
    expect(Math.floor(4 * (156 / 100) ** (2 / 9))).toBe(4)
  })

  it('speaks of jurisdictions, not clusters, and keeps the technical text one click away', () => {
    const text = 'only 1 treated cluster: cluster-robust errors may be unreliable (a wild cluster bootstrap or placebo inference is safer)'
    const w = explainWarning(text)
    expect(w.message).toBe('Only 1 treated jurisdiction: the usual standard errors are likely too small. The interval from placebo units or the wild bootstrap is the one to read.')
    expect(w.detail).toBe(text)
  })

  it('counts dropped rows in words', () => {
    expect(explainWarning('dropped 3 rows with missing values (outcome 3)').message).toBe('3 rows with a missing value were left out of the estimate.')
    expect(explainWarning('dropped 1 row with missing values (outcome 1)').message).toBe('1 row with a missing value was left out of the estimate.')
  })

  it('leaves an unknown warning as a sentence without a detail', () => {
    expect(explainWarning('something new happened')).toEqual({ message: 'Something new happened.', detail: null })
  })

  it('passes an already explained warning through, and prints the detail in brackets', () => {
    expect(explainWarning({ message: 'A.', detail: 'b' })).toEqual({ message: 'A.', detail: 'b' })
    expect(warningText('errors are not clustered (cluster "none"): x')).toMatch(/^The standard errors treat every period .* \[Detail: errors are not clustered \(cluster "none"\): x\]$/)
  })
})
