import { z } from 'zod';

/** The desk's roles (PRODUCT.md). A person can hold several; they come from identity-provider groups. */
export const ROLES = ['meteorologist', 'trader', 'risk', 'admin'] as const;
export type Role = (typeof ROLES)[number];
export const roleSchema = z.enum(ROLES);

export const ROLE_LABELS: Record<Role, string> = {
  meteorologist: 'Meteorologist',
  trader: 'Trader',
  risk: 'Risk',
  admin: 'Admin',
};

/** The group -> role mapping a fresh installation starts with; admins change it in the Admin screen. */
export const DEFAULT_ROLE_MAPPINGS: ReadonlyArray<{ group: string; role: Role }> = [
  { group: 'lw-meteorologists', role: 'meteorologist' },
  { group: 'lw-traders', role: 'trader' },
  { group: 'lw-risk', role: 'risk' },
  { group: 'lw-admins', role: 'admin' },
];
