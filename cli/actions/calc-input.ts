import { readFile } from 'node:fs/promises'
import { z } from 'zod'
import { AppError, formatProblems, type Problem } from '../../shared/errors.ts'
import { parseReferenceSet, problemsFromZod, type ReferenceSet } from '../../shared/reference-sets/reference-set.ts'

/** Reads a file, or standard input for "-". Missing file → not_found; other read errors → io. */
export async function readInputText(path: string): Promise<string> {
  if (path === '-') {
    const chunks: Buffer[] = []
    for await (const chunk of process.stdin) chunks.push(chunk as Buffer)
    return Buffer.concat(chunks).toString('utf8')
  }
  try {
    return await readFile(path, 'utf8')
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code
    if (code === 'ENOENT') throw new AppError('not_found', `${path}: file not found`)
    if (code === 'EISDIR') throw new AppError('invalid_input', `${path}: is a directory, expected a JSON file`)
    throw new AppError('io', `${path}: cannot read (${code ?? (error as Error).message})`)
  }
}

/** The name a file is shown under in messages. */
export function inputName(path: string): string {
  return path === '-' ? 'stdin' : path
}

/** Throws AppError('invalid_input') listing the problems, each prefixed with the file name. */
export function refuse(file: string, problems: Problem[]): never {
  throw new AppError('invalid_input', formatProblems(problems, file))
}

/** Parses JSON text and validates it with a zod schema; refuses with JSON paths. */
export function parseJsonInput<T>(text: string, file: string, schema: z.ZodType<T>): T {
  let data: unknown
  try {
    data = JSON.parse(text)
  } catch (error) {
    refuse(file, [{ code: 'invalid_json', message: `not valid JSON: ${(error as Error).message}` }])
  }
  const result = schema.safeParse(data)
  if (!result.success) refuse(file, problemsFromZod(result.error))
  return result.data
}

/** Loads an advisor's own reference set from a JSON file; refuses with JSON paths. */
export async function readReferenceFile(path: string): Promise<ReferenceSet> {
  const { value, problems } = parseReferenceSet(await readInputText(path))
  if (!value) refuse(inputName(path), problems)
  return value
}

const units = z.enum(['us', 'metric'])
const size = z.number().positive()

export const storageFileSchema = z.discriminatedUnion('shape', [
  z.strictObject({
    shape: z.literal('rectangular'),
    units,
    length: size,
    width: size,
    depth: size,
    freeboard: z.number().min(0).optional(),
    manure_depth: z.number().min(0).optional(),
    bulk_density: size.optional(),
  }),
  z.strictObject({
    shape: z.literal('circular'),
    units,
    diameter: size,
    depth: size,
    freeboard: z.number().min(0).optional(),
    manure_depth: z.number().min(0).optional(),
    bulk_density: size.optional(),
  }),
  z.strictObject({
    shape: z.literal('basin'),
    units,
    top_length: size,
    top_width: size,
    depth: size,
    side_slope: z.number().min(0),
    end_slope: z.number().min(0).optional(),
    freeboard: z.number().min(0).optional(),
    manure_depth: z.number().min(0).optional(),
    bulk_density: size.optional(),
  }),
])
export type StorageFile = z.infer<typeof storageFileSchema>

export const calibrationFileSchema = z.discriminatedUnion('method', [
  z.strictObject({ method: z.literal('load_area'), units, form: z.enum(['liquid', 'solid']), load: size, length: size, width: size }),
  z.strictObject({ method: z.literal('sheet'), units, caught: z.array(z.number().min(0)).min(1), sheet_area: size }),
  z.strictObject({
    method: z.literal('setting'),
    units,
    form: z.enum(['liquid', 'solid']),
    target_rate: size,
    width: size,
    speed: size.optional(),
    discharge_per_min: size.optional(),
  }),
])
export type CalibrationFile = z.infer<typeof calibrationFileSchema>

export const samplesFileSchema = z.strictObject({
  values: z.array(z.number()).min(1),
  label: z.string().optional(),
  unit: z.string().optional(),
  confidence: z.number().gt(0).lt(1).optional(),
  precision: z.number().positive().optional(),
  rate: z.number().positive().optional(),
})
export type SamplesFile = z.infer<typeof samplesFileSchema>
