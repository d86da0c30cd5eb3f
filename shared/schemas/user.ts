import { z } from 'zod'
import { line } from '../text'
import { ROLES } from '../roles'

// The commonest passwords refused outright (a short list; length does most of the work).
const COMMON_PASSWORDS = new Set([
  '1234567890', '12345678910', '0123456789', 'qwertyuiop', 'password12', 'password123', 'password1234',
  'passwordpassword', 'iloveyou12', 'qwerty1234', 'qwerty12345', '1q2w3e4r5t', 'abcdefghij', 'letmein123',
  'welcome123', 'admin12345', 'administrator', 'football12', 'monkey1234', 'dragon1234', 'sunshine12',
  'princess12', 'baseball12', 'trustno1234', '1111111111', '0000000000', 'aaaaaaaaaa', 'changeme123',
])

export const PASSWORD_MIN_LENGTH = 10

export const PasswordSchema = line()
  .min(PASSWORD_MIN_LENGTH, `must be at least ${PASSWORD_MIN_LENGTH} characters`)
  .max(200, 'must be at most 200 characters')
  .refine((p) => !COMMON_PASSWORDS.has(p.toLowerCase()), 'is one of the commonest passwords: choose another')
  .refine((p) => new Set(p).size >= 4, 'needs more than three different characters')

export const EmailSchema = line().trim().toLowerCase().email('must be an e-mail address').max(190)

export const SignInSchema = z.object({
  email: EmailSchema,
  password: line().min(1, 'is required').max(200),
})

export const UserCreateSchema = z.object({
  email: EmailSchema,
  name: line().trim().min(2, 'must be at least 2 characters').max(120),
  role: z.enum(ROLES),
  organisationId: z.coerce.number().int().positive(),
  password: PasswordSchema,
})

export const UserUpdateSchema = z
  .object({
    name: line().trim().min(2).max(120).optional(),
    role: z.enum(ROLES).optional(),
    active: z.boolean().optional(),
    password: PasswordSchema.optional(),
  })
  .refine((v) => Object.keys(v).length > 0, 'nothing to change')

export const OrganisationCreateSchema = z.object({
  name: line().trim().min(2).max(120),
  kind: z.enum(['supplier', 'team']),
  supplierId: z.coerce.number().int().positive().nullable().optional(),
})
