import { DEMO, PHONE, expect, signIn, test } from './fixtures'

// Every part made here carries a package name with this tag, so searches can be narrowed to them.
const tag = `E2E-${Date.now().toString(36)}`

test.describe('parts catalogue', () => {
  test('creates parts by typing codes and finds them by value', async ({ page }) => {
    await signIn(page, DEMO.organiser)
    await page.goto('/parts')
    await page.getByRole('link', { name: 'New part' }).click()
    await expect(page.getByRole('heading', { name: 'New part' })).toBeVisible()

    // IEC 60062: 4k7 = 4.7 kΩ; colour code yellow 4, violet 7, red ×100, gold ±5 %.
    await page.getByLabel('Kind').selectOption('resistor')
    await page.getByLabel('Value').fill('4k7k')
    await expect(page.getByText('"4k7k" is not a value')).toBeVisible()
    await page.getByLabel('Value').fill('4k7')
    await expect(page.getByTestId('value-reading')).toContainText('4.7 kΩ')
    await expect(page.getByTestId('value-reading')).toContainText('bands yellow violet red gold')
    await page.getByLabel('Package or footprint').fill(`${tag} axial`)
    await page.getByRole('button', { name: 'Add part' }).click()
    await expect(page.getByRole('heading', { name: 'Resistor 4.7 kΩ' })).toBeVisible()

    // IEC 60062 capacitor code: 104 = 10 × 10⁴ pF = 100 nF.
    await page.goto('/parts/new')
    await page.getByLabel('Kind').selectOption('capacitor')
    await page.getByLabel('Value').fill('104')
    await expect(page.getByTestId('value-reading')).toContainText('100 nF')
    await page.getByLabel('Dielectric').fill('X7R')
    await page.getByLabel('Voltage rating').fill('fifty')
    await page.getByLabel('Package or footprint').fill(`${tag} disc`)
    await page.getByRole('button', { name: 'Add part' }).click()
    await expect(page.getByText('"fifty" is not a rating')).toBeVisible()
    await page.getByLabel('Voltage rating').fill('50 V')
    await page.getByRole('button', { name: 'Add part' }).click()
    await expect(page.getByRole('heading', { name: 'Capacitor 100 nF X7R' })).toBeVisible()
    await expect(page.getByText('Voltage rating')).toBeVisible()

    await page.goto('/parts')
    await page.getByLabel('Filter by package').fill(tag)
    await expect(page.getByTestId('parts-count')).toContainText('of 2 parts')
    const table = page.getByTestId('parts-table')
    await page.getByLabel('Search by value, name or package').fill('yellow violet red')
    await expect(page.getByTestId('search-readings')).toContainText('4.7 kΩ')
    await expect(table.getByRole('link', { name: 'Resistor 4.7 kΩ' })).toBeVisible()
    await expect(table.getByRole('link', { name: 'Capacitor 100 nF X7R' })).toHaveCount(0)
    await page.getByLabel('Search by value, name or package').fill('4.7k')
    await expect(page.getByTestId('parts-count')).toContainText('of 1 part')
    await page.getByLabel('Search by value, name or package').fill('104')
    await expect(table.getByRole('link', { name: 'Capacitor 100 nF X7R' })).toBeVisible()
    await expect(table.getByRole('link', { name: 'Resistor 4.7 kΩ' })).toHaveCount(0)
    await page.getByLabel('Search by value, name or package').fill('0.1u')
    await expect(page.getByTestId('search-readings')).toContainText('100 n (any unit)')
    await expect(table.getByRole('link', { name: 'Capacitor 100 nF X7R' })).toBeVisible()

    // The search stays in the address: back from a part returns to the same list.
    await table.getByRole('link', { name: 'Capacitor 100 nF X7R' }).click()
    await expect(page.getByRole('heading', { name: 'Capacitor 100 nF X7R' })).toBeVisible()
    await page.goBack()
    await expect(page.getByLabel('Search by value, name or package')).toHaveValue('0.1u')
  })

  test('shows parts as cards on a phone, and packers cannot add parts', async ({ page }) => {
    await page.setViewportSize(PHONE)
    await signIn(page, DEMO.packer)
    await page.goto('/parts?q=4k7&kind=resistor')
    const cards = page.getByTestId('parts-cards')
    await expect(cards.getByRole('link', { name: /Resistor 4.7 kΩ/ }).first()).toBeVisible()
    await expect(page.getByRole('link', { name: 'New part' })).toHaveCount(0)
    await page.getByRole('button', { name: 'Filters' }).click()
    await expect(page.getByLabel('Kind', { exact: true })).toHaveValue('resistor')
  })
})

test.describe('swap rules', () => {
  test('creates a group in the UI, looks up its stand-in, and refuses a contradiction', async ({ page }) => {
    await signIn(page, DEMO.organiser)
    for (const [name, pinout] of [[`Small NPN ${tag}`, 'EBC'], [`Other NPN ${tag}`, 'CBE']]) {
      const res = await page.request.post('/api/parts', { data: { kind: 'transistor', name, pinoutNote: pinout, package: 'TO-92' } })
      expect(res.status()).toBe(201)
    }
    await page.goto('/parts/swaps')
    await page.getByRole('button', { name: 'New group' }).click()
    const form = page.getByRole('form', { name: 'New interchangeable group' })
    await form.getByLabel('Group name').fill(`Pinout ${tag}`)
    await form.getByLabel('Warning shown with the stand-in').fill('pinout differs: turn 180°')
    for (const name of [`Small NPN ${tag}`, `Other NPN ${tag}`]) {
      await form.getByLabel('Add a part').fill(name)
      await form.getByRole('button', { name: new RegExp(name) }).click()
    }
    await form.getByLabel(`Direction for Small NPN ${tag}`).selectOption('replaced')
    await form.getByLabel(`Direction for Other NPN ${tag}`).selectOption('replaces')
    await form.getByRole('button', { name: 'Create group' }).click()
    const card = page.getByRole('article', { name: `Pinout ${tag}` })
    await expect(card).toBeVisible()
    await expect(card.getByText('May be replaced')).toBeVisible()

    await page.getByLabel('Part', { exact: true }).fill(`Small NPN ${tag}`)
    await page.getByRole('button', { name: new RegExp(`Small NPN ${tag}`) }).click()
    await expect(page.getByTestId('lookup-title')).toHaveText(`Stand-ins for Small NPN ${tag}`)
    const standIns = page.getByTestId('stand-ins')
    await expect(standIns.getByRole('link', { name: `Other NPN ${tag}` })).toBeVisible()
    await expect(standIns).toContainText(`interchangeable group "Pinout ${tag}"`)
    await expect(standIns).toContainText('pinout differs: turn 180°')

    // The same two parts the other way round, one-way only: a contradiction.
    await page.getByRole('button', { name: 'New group' }).click()
    const second = page.getByRole('form', { name: 'New interchangeable group' })
    await second.getByLabel('Group name').fill(`Backwards ${tag}`)
    for (const name of [`Small NPN ${tag}`, `Other NPN ${tag}`]) {
      await second.getByLabel('Add a part').fill(name)
      await second.getByRole('button', { name: new RegExp(name) }).click()
    }
    await second.getByLabel(`Direction for Small NPN ${tag}`).selectOption('replaces')
    await second.getByLabel(`Direction for Other NPN ${tag}`).selectOption('replaced')
    await second.getByRole('button', { name: 'Create group' }).click()
    await expect(page.getByTestId('group-problems')).toContainText(`Contradicts group "Pinout ${tag}"`)
    await expect(page.getByRole('article', { name: `Backwards ${tag}` })).toHaveCount(0)
  })
})
