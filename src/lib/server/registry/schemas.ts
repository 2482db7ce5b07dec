// Request shapes of the registry routes (the API and the forms use the same ones). Types only: the
// services check every value's meaning and say what is wrong with it.
import { z } from 'zod';

const text = (field: string) => z.string({ error: `${field} must be a string` });

export const newFormulationSchema = z.object({ name: text('name'), title: text('title') });
export const newVersionSchema = z.object({ version: text('version'), source: text('source') });
export const sourceSchema = z.object({ source: text('source') });
export const reviewSchema = z.object({
  decision: z.enum(['approve', 'reject'], { error: "decision must be 'approve' or 'reject'" }),
  comment: text('comment').optional()
});
export const withdrawSchema = z.object({ reason: text('reason') });
export const newProjectSchema = z.object({ key: text('key'), title: text('title') });
export const pinSchema = z.object({ version: text('version') });

const whole = (field: string) =>
  z.coerce.number({ error: `${field} must be a whole number` }).int(`${field} must be a whole number`);

export const listQuerySchema = z.object({
  q: z.string().optional(),
  cell: z.string().optional(),
  status: z.string().optional(),
  strain: z.string().optional(),
  author: z.string().optional(),
  sort: z.string().optional(),
  in_review: z.enum(['true', 'false', '1', '0'], { error: "in_review must be 'true' or 'false'" }).optional(),
  page: whole('page').optional(),
  per_page: whole('per_page').optional()
});

export const auditQuerySchema = z.object({
  subject: z.string().optional(),
  actor: z.string().optional(),
  action: z.string().optional(),
  from: z.string().optional(),
  until: z.string().optional(),
  page: whole('page').optional(),
  per_page: whole('per_page').optional()
});

export const compareQuerySchema = z.object({ from: z.string().optional(), to: z.string().optional() });
