// The captures filed with one repair record, loaded once per page: the record's list and each
// step's summary read the same answer (one key, one request).

export const recordCapturesKey = (recordId: number) => `record-captures-${recordId}`

export function useRecordCaptures(recordId: number) {
  return useFetch('/api/captures', {
    key: recordCapturesKey(recordId),
    query: { record: recordId, pageSize: 100 },
  })
}
