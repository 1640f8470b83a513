// Label rendering speed: 60 bags × (1 bag label + 6 pouch labels) = 420 labels on A4 3 × 8 sheets.
// Target: under 1500 ms. Run: npx tsx bench/labels.ts  (writes bench/out/labels.pdf to look at)
import { mkdirSync, writeFileSync } from 'node:fs'
import { labelUrl, newBagCode, signCode } from '../server/utils/codes'
import { type Label, SHEET_LAYOUTS, renderLabels } from '../server/utils/labels'

const SECRET = 'bench-secret-for-label-codes-000'
const BASE = 'https://kitwright.example.org'
const BAGS = 60
const STAGES = ['Power supply', 'VFO', 'Mixer and filter', 'Audio amplifier', 'Transmitter', 'Final assembly']
const layout = SHEET_LAYOUTS.find(l => l.id === 'a4-3x8')!

/** Pouches carry their bag's QR code when `shareQr`, else each label gets a QR code of its own. */
function buildLabels(shareQr: boolean): Label[] {
  const labels: Label[] = []
  for (let b = 0; b < BAGS; b++) {
    const code = newBagCode()
    const token = signCode('bag', code, SECRET)
    const url = labelUrl(BASE, 'bag', code, SECRET)
    labels.push({ qrText: url, code: token, title: `Builder ${b + 1}`, tone: 'bag', lines: ['40 m QRP transceiver, rev C', 'Options: 20 m band set', `6 pouches, ${120 + b} parts`] })
    STAGES.forEach((stage, s) => {
      const qrText = shareQr ? url : `${url}?pouch=${s + 1}`
      labels.push({ qrText, code: token, title: `Stage ${s + 1}: ${stage}`, tone: 'pouch', lines: ['40 m QRP transceiver, rev C', `${10 + s * 4} parts`] })
    })
  }
  return labels
}

// CPU time is printed beside wall time: on a shared 2-core machine the wall time also counts waiting.
async function timed(labels: Label[]): Promise<{ ms: number; cpuMs: number; bytes: number; pdf: Buffer }> {
  const cpu = process.cpuUsage()
  const start = performance.now()
  const pdf = await renderLabels(labels, layout)
  const used = process.cpuUsage(cpu)
  return { ms: performance.now() - start, cpuMs: (used.user + used.system) / 1000, bytes: pdf.length, pdf }
}

const shared = buildLabels(true)
const cold = await timed(shared)
const warm: { ms: number; cpuMs: number }[] = []
for (let i = 0; i < 3; i++) warm.push(await timed(shared))
warm.sort((a, b) => a.ms - b.ms)
const distinct = await timed(buildLabels(false))

const pages = Math.ceil(shared.length / (layout.rows * layout.cols))
console.log(`labels: ${shared.length} (${BAGS} bags × ${1 + STAGES.length}) on ${layout.id}, ${pages} pages`)
const ms = (t: { ms: number; cpuMs: number }) => `${t.ms.toFixed(0)} ms (CPU ${t.cpuMs.toFixed(0)} ms)`
console.log(`first render (loads fonts, cold JIT): ${ms(cold)}, PDF ${(cold.bytes / 1024).toFixed(0)} KiB`)
console.log(`warm render, median of 3: ${ms(warm[1]!)} (target < 1500 ms)`)
console.log(`every label with its own QR code: ${ms(distinct)}, PDF ${(distinct.bytes / 1024).toFixed(0)} KiB`)
mkdirSync(new URL('./out/', import.meta.url), { recursive: true })
writeFileSync(new URL('./out/labels.pdf', import.meta.url), cold.pdf)
