// The master-data list every store keeps: loaded once unless forced, looked up by id, and kept in step with write answers.
import { describe, expect, it, vi } from 'vitest'
import { useRecordList } from '@/composables/use-record-list'

type Row = { id: number; name: string }

describe('record list', () => {
  it('when load is asked twice, then the server is asked once; forced, it is asked again', async () => {
    const fetchAll = vi.fn(async (): Promise<Row[]> => [{ id: 1, name: 'Setting bench A' }])
    const list = useRecordList(fetchAll)
    await list.load()
    await list.load()
    expect(fetchAll).toHaveBeenCalledTimes(1)
    await list.load(true)
    expect(fetchAll).toHaveBeenCalledTimes(2)
    expect(list.loaded.value).toBe(true)
  })

  it('when a write answers, then its record replaces the one with its id, or is added when new, and byId follows', async () => {
    const list = useRecordList(async (): Promise<Row[]> => [
      { id: 1, name: 'Polishing' },
      { id: 2, name: 'Soldering' },
    ])
    await list.load()
    list.put({ id: 2, name: 'Soldering and annealing' })
    list.put({ id: 7, name: 'Engraving' })
    // Hand-worked: 1 kept, 2 renamed in place, 7 appended at the end.
    expect(list.items.value.map((r) => `${r.id}:${r.name}`)).toEqual(['1:Polishing', '2:Soldering and annealing', '7:Engraving'])
    expect(list.byId.value.get(7)?.name).toBe('Engraving')
  })

  it("when a write is followed by a reload, then the answer is returned and the list is the server's new one", async () => {
    let server: Row[] = [{ id: 1, name: 'B' }]
    const list = useRecordList(async () => server)
    await list.load()
    const answer = await list.thenReload(
      (async () => {
        server = [
          { id: 2, name: 'A' },
          { id: 1, name: 'B' },
        ]
        return { id: 2, name: 'A' }
      })(),
    )
    expect(answer).toEqual({ id: 2, name: 'A' })
    expect(list.items.value.map((r) => r.id)).toEqual([2, 1])
  })
})
