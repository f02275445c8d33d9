import { z } from 'zod';

/** GET /api/app-info: what the client needs to know about the server before anyone signs in. */
export const appInfoSchema = z.object({
  environment: z.enum(['development', 'test', 'production']),
  version: z.string(),
  /** development-only screens and the local stand-ins (identity provider, mail catcher) are on */
  devTools: z.boolean(),
});
export type AppInfo = z.infer<typeof appInfoSchema>;
