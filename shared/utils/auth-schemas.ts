import { z } from 'zod'

export const ROLE_NAMES = ['organiser', 'packer', 'builder'] as const

export const emailField = z.string().trim().toLowerCase().max(254, 'Keep the e-mail address under 254 characters').email('Enter a valid e-mail address')
export const passwordField = z.string().min(10, 'Use at least 10 characters').max(200, 'Use at most 200 characters')
export const nameField = z.string().trim().min(1, 'Enter your name').max(120, 'Keep the name under 120 characters')

export const loginSchema = z.object({ email: emailField, password: z.string().min(1, 'Enter your password').max(200) })
export const registerSchema = z.object({ name: nameField, email: emailField, password: passwordField })
export const inviteSchema = z.object({
  email: emailField,
  roles: z.array(z.enum(ROLE_NAMES)).min(1, 'Choose at least one role'),
})
export const acceptInviteSchema = z.object({ name: nameField.optional().or(z.literal('')), password: z.string().min(1, 'Enter a password').max(200) })
export const resetRequestSchema = z.object({ email: emailField })
export const resetSchema = z.object({ token: z.string().min(20).max(200), password: passwordField })
