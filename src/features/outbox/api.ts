/** The outbox feature's HTTP layer: the mails the local mail catcher kept (development only). */
import { queryOptions } from '@tanstack/react-query';
import { z } from 'zod';
import { apiFetch } from '@/lib/api.ts';

export const caughtMailSchema = z.object({
  id: z.string(),
  receivedAt: z.string(),
  from: z.string(),
  to: z.array(z.string()),
  subject: z.string(),
  text: z.string(),
  html: z.string().nullable(),
});
export type CaughtMail = z.infer<typeof caughtMailSchema>;

export const outboxQuery = queryOptions({
  queryKey: ['dev-outbox'],
  queryFn: async () => z.object({ mails: z.array(caughtMailSchema) }).parse(await apiFetch('/api/dev/outbox')).mails,
  refetchInterval: 5000,
});
