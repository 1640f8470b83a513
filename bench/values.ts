// Parses 100,000 generated value strings of mixed spellings and prints the time (target: under
// 200 ms) and a checksum, so a change in what is parsed shows as a different checksum.
// Run: npx tsx bench/values.ts
import { findCombination, parseValue } from '../shared/utils/values'

const N = 100_000
const E12 = [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2]

// A small deterministic generator (mulberry32) so every run parses the same strings.
function rng(seed: number): () => number {
  let a = seed >>> 0
  return () => {
    a = (a + 0x6d2b79f5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
}

function generate(n: number): [string, string][] {
  const r = rng(42)
  const pick = <T>(xs: T[]) => xs[Math.floor(r() * xs.length)]!
  const out: [string, string][] = []
  for (let i = 0; i < n; i++) {
    const m = pick(E12)
    const [whole, frac = '0'] = m.toFixed(1).split('.')
    switch (i % 8) {
      case 0: out.push([`${whole}k${frac}`, 'resistor']); break
      case 1: out.push([`${m} k\u03A9`, 'resistor']); break
      case 2: out.push([`${Math.round(m * 100)}nF`, 'capacitor']); break
      case 3: out.push([`${whole}n${frac}`, 'capacitor']); break
      case 4: out.push([`${m * 10}\u00B5H`, 'inductor']); break
      case 5: out.push([`${(7 + r()).toFixed(3)} MHz`, 'crystal']); break
      case 6: out.push([`${whole}K${frac}${pick(['F', 'G', 'J', 'K'])}`, 'resistor']); break
      default: out.push([`${Math.round(m * 1000)}`, 'resistor'])
    }
  }
  return out
}

const inputs = generate(N)
// One warm-up pass so the figure is the steady state, not the JIT's first look.
for (let i = 0; i < 5000; i++) parseValue(inputs[i]![0], inputs[i]![1])

// Five timed passes: the machine is shared, so the median and the best are both printed.
const RUNS = 5
const times: number[] = []
let checksum = 0
for (let run = 0; run < RUNS; run++) {
  const t0 = performance.now()
  let sum = 0
  for (const [text, kind] of inputs) {
    const p = parseValue(text, kind)
    sum = (sum + Math.log10(p.value) * 1000 + (p.tolerance ?? 0)) % 1e9
  }
  times.push(performance.now() - t0)
  checksum = sum
}
times.sort((a, b) => a - b)
const median = times[RUNS >> 1]!
console.log(`parseValue: ${N} strings, median ${median.toFixed(1)} ms, best ${times[0]!.toFixed(1)} ms of ${RUNS} runs (${((median * 1000) / N).toFixed(2)} µs each); target < 200 ms: ${median < 200 ? 'met' : 'MISSED'}`)
console.log(`checksum: ${checksum.toFixed(3)}`)

const stocked = Array.from({ length: 400 }, (_, i) => Number(`${E12[i % 12]}e${Math.floor(i / 12) % 7}`))
const t1 = performance.now()
let found = 0
for (let i = 0; i < 100; i++) found += findCombination(1000 + i * 37, 'resistor', stocked, 1).length
console.log(`findCombination: 100 targets over ${stocked.length} stocked values in ${(performance.now() - t1).toFixed(1)} ms (${found} ways found)`)
