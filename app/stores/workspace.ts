/**
 * The study workspace's client state: which study is open, the pool table's filters and
 * sort, the trends view, and the design and runs chosen on the Estimates step. Server data
 * stays with the composables (useStudy*); this store holds only what the analyst selected.
 */
import { defineStore } from 'pinia'
import type { RunDesign } from '#shared/schemas/studies'

export interface ScoreRange { min: number | null, max: number | null }

export const useWorkspaceStore = defineStore('workspace', () => {
  const studyId = ref<number | null>(null)

  // Pool step
  const poolFilters = reactive({
    text: '',
    region: '',
    kind: '',
    flagged: 'all' as 'all' | 'flagged' | 'unflagged',
    ranges: {} as Record<string, ScoreRange>,
  })
  const poolSort = ref<{ id: string, desc: boolean }[]>([{ id: 'rank', desc: false }])

  // Trends step
  const trendScale = ref<'levels' | 'indexed'>('levels')
  const highlightDonor = ref<string | null>(null)

  // Estimates step
  const design = ref<RunDesign>('did')
  const compared = ref<number[]>([])
  const lastRunMs = ref<number | null>(null)

  function open(id: number) {
    if (studyId.value === id) return
    studyId.value = id
    Object.assign(poolFilters, { text: '', region: '', kind: '', flagged: 'all', ranges: {} })
    poolSort.value = [{ id: 'rank', desc: false }]
    highlightDonor.value = null
    compared.value = []
    lastRunMs.value = null
  }

  function toggleCompared(runId: number) {
    compared.value = compared.value.includes(runId) ? compared.value.filter(id => id !== runId) : [...compared.value, runId].slice(-4)
  }

  function setRange(score: string, range: ScoreRange) {
    poolFilters.ranges = { ...poolFilters.ranges, [score]: range }
  }

  return { studyId, poolFilters, poolSort, trendScale, highlightDonor, design, compared, lastRunMs, open, toggleCompared, setRange }
})
