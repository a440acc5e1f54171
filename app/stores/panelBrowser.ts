/** What the panel browser shows: the measure, the jurisdictions and the period range chosen. */
import { defineStore } from 'pinia'

export const usePanelBrowser = defineStore('panelBrowser', () => {
  const measure = ref('')
  const units = ref<string[]>([])
  const from = ref('')
  const to = ref('')
  function toggle(code: string) {
    units.value = units.value.includes(code) ? units.value.filter(c => c !== code) : [...units.value, code]
  }
  const query = computed(() => ({
    measure: measure.value,
    ...(units.value.length ? { units: units.value.join(',') } : {}),
    ...(from.value ? { from: from.value } : {}),
    ...(to.value ? { to: to.value } : {}),
  }))
  return { measure, units, from, to, toggle, query }
})
