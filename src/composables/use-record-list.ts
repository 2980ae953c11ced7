// The list every master-data store keeps: all records of one kind, loaded once (again when forced), looked up by id, and
// kept in step with the answers of writes — an answer replaces its record, or is added when it is new.
import { computed, ref, type Ref } from 'vue'
import { useLoading } from './use-loading'

export function useRecordList<T extends { id: number }>(fetchAll: () => Promise<T[]>) {
  const items = ref([]) as Ref<T[]>
  const loaded = ref(false)
  const { loading, error, track } = useLoading()
  const byId = computed(() => new Map(items.value.map((x) => [x.id, x])))

  async function load(force = false) {
    if (loaded.value && !force) return
    items.value = await track(fetchAll)
    loaded.value = true
  }
  /** Puts a write's answer in the list (replacing the record with its id) and returns it. */
  function put(x: T): T {
    const i = items.value.findIndex((y) => y.id === x.id)
    if (i >= 0) items.value.splice(i, 1, x)
    else items.value.push(x)
    return x
  }
  /** Runs a write, then loads the list again (for lists the server sorts or where one write changes several records). */
  async function thenReload<R>(write: Promise<R>): Promise<R> {
    const r = await write
    await load(true)
    return r
  }
  return { items, loaded, loading, error, byId, load, put, thenReload }
}
