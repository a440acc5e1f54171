/**
 * Server data of one study through useFetch (keyed per study so the workspace's steps share
 * one copy): the study itself, its candidates, trends and runs. Writes go through $fetch
 * in the pages' handlers and then refresh what they changed.
 */
import type { MaybeRefOrGetter } from 'vue'

export function useStudy(id: MaybeRefOrGetter<number>) {
  return useFetch(() => `/api/studies/${toValue(id)}`, { key: `study-${toValue(id)}` })
}

export function useStudyCandidates(id: MaybeRefOrGetter<number>) {
  return useFetch(() => `/api/studies/${toValue(id)}/candidates`, { key: `study-candidates-${toValue(id)}` })
}

/** `window`: the event study's window chosen on the Trends step (null: the one that follows the data). */
export function useStudyTrends(id: MaybeRefOrGetter<number>, window: MaybeRefOrGetter<{ from: number, to: number } | null> = null) {
  return useFetch(() => `/api/studies/${toValue(id)}/trends`, {
    key: `study-trends-${toValue(id)}`,
    server: false,
    query: computed(() => { const w = toValue(window); return w ? { from: w.from, to: w.to } : {} }),
  })
}

export function useStudyRuns(id: MaybeRefOrGetter<number>) {
  return useFetch(() => `/api/studies/${toValue(id)}/runs`, { key: `study-runs-${toValue(id)}` })
}

/** The study list, filtered on the server (every filter optional; `mine` for the caller's own). */
export function useStudies(status: MaybeRefOrGetter<string>, mine: MaybeRefOrGetter<boolean> = false, more: MaybeRefOrGetter<{ owner?: string, outcome?: string }> = {}) {
  return useFetch('/api/studies', {
    query: computed(() => {
      const m = toValue(more)
      return { ...(toValue(status) ? { status: toValue(status) } : {}), ...(toValue(mine) ? { mine: '1' } : {}), ...(m.owner ? { owner: m.owner } : {}), ...(m.outcome ? { outcome: m.outcome } : {}) }
    }),
  })
}

/** The study's robustness checks, newest first (client only: the page polls while any runs). */
export function useStudyRobustness(id: MaybeRefOrGetter<number>) {
  return useFetch(() => `/api/studies/${toValue(id)}/robustness`, { key: `study-robustness-${toValue(id)}` })
}
