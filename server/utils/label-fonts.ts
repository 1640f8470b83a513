let cached: { regular: Buffer, bold: Buffer } | undefined

/** Roboto for label PDFs from Nitro's bundled server assets, so labels work whatever the working folder. */
export async function labelFonts() {
  if (cached) return cached
  const assets = useStorage('assets:server')
  const read = async (file: string) => {
    const raw = await assets.getItemRaw(`fonts:${file}`)
    if (!raw) throw createError({ statusCode: 500, statusMessage: 'Label font missing', message: `The label font ${file} is missing from the server assets` })
    return Buffer.from(raw as Uint8Array)
  }
  cached = { regular: await read('roboto-latin-400-normal.woff'), bold: await read('roboto-latin-700-normal.woff') }
  return cached
}
