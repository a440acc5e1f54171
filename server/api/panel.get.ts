/**
 * GET /api/panel?measure=KEY&units=A,B&from=P&to=P&format=json|csv&release=ID,ID&asOf=ISO —
 * any signed-in user: one measure's values, newest release per cell (or within the given
 * releases / as of a moment). JSON {measure, label, unit, frequency, rows: [{jurisdiction,
 * period, value}], releases} or CSV (jurisdiction,period,value).
 */
import { panelQuerySchema } from '#shared/schemas/uploads'
import { panelCsv, readPanel } from '../services/panel'

export default defineEventHandler(async (event) => {
  await requireUser(event)
  const { format, ...query } = await getValidatedQuery(event, check(panelQuerySchema, 'query'))
  const panel = await readPanel(usePool(), query)
  if (format === 'csv') {
    setResponseHeader(event, 'content-type', 'text/csv; charset=utf-8')
    setResponseHeader(event, 'content-disposition', `attachment; filename="${panel.measure}.csv"`)
    return panelCsv(panel)
  }
  return panel
})
