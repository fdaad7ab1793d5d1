/**
 * Benchmark of capture upload processing on a deterministic 1 000 000-sample CSV
 * (50 Hz, 100 kS/s, 10 s; time, voltage, current; 7 significant digits as scopes write them).
 *
 *   npm run bench:captures -- [--samples 1000000] [--reps 5]
 *
 * Measures, interleaved and as medians of the repetitions:
 *   (a) the bare float parse: split lines, split fields, Number() into Float64Arrays (no CSV package),
 *   (b) parseCaptureCsv: the real stream parse (uDSV for unquoted exports, csv-parse when quoted), fed in 64 KB chunks,
 *   (c) analyseWaveform on the parsed capture.
 * Targets: (b)+(c) ≤ 1000 ms and ≤ 3× (a); (c) well under 300 ms. Timings depend on the machine
 * and are reported, not enforced; the exit code is 1 only when the parsers disagree.
 */
import { Readable } from 'node:stream'
import v8 from 'node:v8'
import vm from 'node:vm'
import { parseCaptureCsv } from '../../server/services/captures/parse'
import { analyseWaveform } from '../../shared/utils/waveform/analyse'
import { captureToCsv, synthesiseCapture } from '../../shared/utils/waveform/synth'

function arg(name: string, fallback: number): number {
  const i = process.argv.indexOf(`--${name}`)
  const v = i >= 0 ? Number(process.argv[i + 1]) : Number.NaN
  return Number.isFinite(v) && v > 0 ? v : fallback
}

const samples = arg('samples', 1_000_000)
const reps = arg('reps', 5)
const sampleRateHz = 100_000

v8.setFlagsFromString('--expose-gc')
const gc = vm.runInNewContext('gc') as () => void
const median = (xs: number[]): number => {
  const s = [...xs].sort((a, b) => a - b)
  const m = s.length >> 1
  return s.length % 2 === 1 ? s[m]! : (s[m - 1]! + s[m]!) / 2
}

// A dimmer at 120° trailing edge into a 50 Ω load, with a little noise on both channels.
const capture = synthesiseCapture({
  vrms: 230,
  frequencyHz: 50,
  sampleRateHz,
  cycles: (samples * 50) / sampleRateHz,
  cut: 'trailing_edge',
  conductionAngleDeg: 120,
  load: { resistanceOhm: 50 },
  noiseVrms: 1,
  currentNoiseArms: 0.01,
  seed: 2024,
})
const csv = Buffer.from(captureToCsv(capture, { digits: 7 }), 'utf8')
const CHUNK = 64 * 1024
const chunks: Buffer[] = []
for (let o = 0; o < csv.length; o += CHUNK) chunks.push(csv.subarray(o, o + CHUNK))
console.log(`capture: ${capture.t.length.toLocaleString('en')} samples, CSV ${(csv.length / 1024 / 1024).toFixed(1)} MB in ${chunks.length} chunks of 64 KB`)

/** The floor: no CSV rules at all, just lines, commas and Number(). */
function bareParse(bytes: Buffer): { t: Float64Array, v: Float64Array, i: Float64Array } {
  const lines = bytes.toString('utf8').split('\n')
  const n = lines.length
  const t = new Float64Array(n)
  const v = new Float64Array(n)
  const i = new Float64Array(n)
  let k = 0
  for (let j = 1; j < n; j++) {
    const line = lines[j]!
    if (line === '') continue
    const f = line.split(',')
    t[k] = Number(f[0])
    v[k] = Number(f[1])
    i[k] = Number(f[2])
    k++
  }
  return { t: t.subarray(0, k), v: v.subarray(0, k), i: i.subarray(0, k) }
}

// Wall time is the target; CPU time (all threads, GC included) is shown beside it because on a
// shared machine the wall clock also counts time spent waiting for a core.
const timings = { bare: [] as number[], parse: [] as number[], analyse: [] as number[] }
const cpu = { bare: [] as number[], parse: [] as number[], analyse: [] as number[] }
const cpuMs = (since: NodeJS.CpuUsage): number => {
  const d = process.cpuUsage(since)
  return (d.user + d.system) / 1000
}
let mismatch = ''
let summary = ''
for (let r = 0; r < reps; r++) {
  gc()
  let c0 = process.cpuUsage()
  let t0 = performance.now()
  const bare = bareParse(csv)
  timings.bare.push(performance.now() - t0)
  cpu.bare.push(cpuMs(c0))

  gc()
  c0 = process.cpuUsage()
  t0 = performance.now()
  const parsed = await parseCaptureCsv(Readable.from(chunks))
  timings.parse.push(performance.now() - t0)
  cpu.parse.push(cpuMs(c0))

  gc()
  c0 = process.cpuUsage()
  t0 = performance.now()
  const analysis = analyseWaveform(parsed)
  timings.analyse.push(performance.now() - t0)
  cpu.analyse.push(cpuMs(c0))

  if (parsed.t.length !== bare.t.length) mismatch = `sample counts differ: ${parsed.t.length} vs ${bare.t.length}`
  for (let k = 0; k < bare.t.length && mismatch === ''; k += 997) {
    if (parsed.t[k] !== bare.t[k] || parsed.v[k] !== bare.v[k] || parsed.i![k] !== bare.i[k]) mismatch = `sample ${k} differs`
  }
  const f = analysis.features
  summary = `${f.frequencyHz!.toFixed(3)} Hz, ${f.vrms.toFixed(2)} V RMS, ${f.cutType} at ${f.conductionAngleDeg.positive.toFixed(2)}°/${f.conductionAngleDeg.negative.toFixed(2)}°, THD ${(100 * f.thd!).toFixed(2)} %, PF ${f.current!.powerFactor!.toFixed(4)}, ${f.cycles} cycles`
}

const bare = median(timings.bare)
const parse = median(timings.parse)
const analyse = median(timings.analyse)
const total = parse + analyse
const cpuBare = median(cpu.bare)
const cpuTotal = median(cpu.parse) + median(cpu.analyse)
const row = (label: string, wall: number, cpuTime: number, target = ''): string =>
  `  ${label.padEnd(34)}${`${wall.toFixed(0)} ms`.padStart(10)}${`${cpuTime.toFixed(0)} ms`.padStart(12)}   ${target}`
console.log(`analysis: ${summary}`)
console.log(`medians of ${reps} runs:${'wall'.padStart(34)}${'CPU'.padStart(12)}`)
console.log(row('(a) bare float parse', bare, cpuBare))
console.log(row('(b) parseCaptureCsv (uDSV)    ', parse, median(cpu.parse)))
console.log(row('(c) analyseWaveform', analyse, median(cpu.analyse), '[target well under 300 ms]'))
console.log(row('total (b)+(c)', total, cpuTotal, `[target ≤ 1000 ms: ${total <= 1000 ? 'met' : 'missed'}]`))
console.log(`  ${'ratio ((b)+(c)) / (a)'.padEnd(34)}${`${(total / bare).toFixed(2)}×`.padStart(10)}${`${(cpuTotal / cpuBare).toFixed(2)}×`.padStart(12)}   [target ≤ 3×: ${total / bare <= 3 ? 'met' : 'missed'}]`)
console.log(`  runs (wall ms): bare ${timings.bare.map(x => x.toFixed(0)).join(' ')} | parse ${timings.parse.map(x => x.toFixed(0)).join(' ')} | analyse ${timings.analyse.map(x => x.toFixed(0)).join(' ')}`)
if (mismatch !== '') {
  console.error(`parsers disagree: ${mismatch}`)
  process.exitCode = 1
}
