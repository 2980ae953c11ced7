import { writeFileSync } from 'node:fs'
import { it } from 'vitest'
import { PDFParse } from 'pdf-parse'
import { createTestApp, signedIn } from '/work/main/tests/setup/app'
it('shot', async () => {
  const t = await createTestApp()
  const m = await signedIn(t.app, 'manager')
  const { rows } = await t.pool.query(`select jb.id from job_bags jb join routing_templates rt on rt.id = jb.template_id where rt.code='pave-pendant' limit 1 offset 3`)
  const r = await m.get(`/api/job-bags/${rows[0].id}/ticket.pdf`).buffer(true).parse((res, cb) => { const c: Buffer[] = []; res.on('data', (x: Buffer) => c.push(x)); res.on('end', () => cb(null, Buffer.concat(c))) })
  writeFileSync('/work/main/test-results/ticket-a6.pdf', r.body)
  const p = new PDFParse({ data: new Uint8Array(r.body) })
  const s = await p.getScreenshot({ scale: 2 })
  writeFileSync('/work/main/test-results/ticket-a6.png', Buffer.from(s.pages[0]!.data))
  await t.close()
})
