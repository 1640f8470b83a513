import type { Cue } from '~/stores/packing'

let ctx: AudioContext | null = null

function audio(): AudioContext | null {
  if (!import.meta.client) return null
  const Ctor = window.AudioContext ?? (window as unknown as { webkitAudioContext?: typeof AudioContext }).webkitAudioContext
  if (!Ctor) return null
  ctx ??= new Ctor()
  if (ctx.state === 'suspended') void ctx.resume()
  return ctx
}

/** One beep: frequency in Hz, start and length in seconds from now. */
function beep(ac: AudioContext, freq: number, start: number, length: number, type: OscillatorType, level = 0.18) {
  const osc = ac.createOscillator()
  const gain = ac.createGain()
  osc.type = type
  osc.frequency.value = freq
  const t = ac.currentTime + start
  // Short ramps avoid clicks at the edges.
  gain.gain.setValueAtTime(0, t)
  gain.gain.linearRampToValueAtTime(level, t + 0.01)
  gain.gain.setValueAtTime(level, t + length - 0.02)
  gain.gain.linearRampToValueAtTime(0, t + length)
  osc.connect(gain).connect(ac.destination)
  osc.start(t)
  osc.stop(t + length + 0.02)
}

// Distinct at a glance by ear in a noisy hall: rising chirp = good, low double buzz = refused,
// a single mid tone = the app asks something, a short tune = sealed.
const PATTERNS: Record<Cue, [number, number, number, OscillatorType][]> = {
  ok: [[1046, 0, 0.08, 'sine'], [1568, 0.08, 0.1, 'sine']],
  bad: [[196, 0, 0.22, 'square'], [147, 0.28, 0.3, 'square']],
  ask: [[784, 0, 0.16, 'triangle']],
  sealed: [[784, 0, 0.1, 'sine'], [988, 0.1, 0.1, 'sine'], [1175, 0.2, 0.1, 'sine'], [1568, 0.3, 0.22, 'sine']],
}

/** Success, error, question and sealed sounds generated with WebAudio (no sound files). */
export function useSounds() {
  const muted = useState('pack-muted', () => false)
  function play(kind: Cue) {
    if (muted.value) return
    const ac = audio()
    if (!ac) return
    for (const [f, s, l, type] of PATTERNS[kind]) beep(ac, f, s, l, type, type === 'square' ? 0.09 : 0.18)
  }
  /** Browsers start audio only after a gesture: call this from the first key press or tap. */
  function unlock() {
    audio()
  }
  return { play, unlock, muted }
}
