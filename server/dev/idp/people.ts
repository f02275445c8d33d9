/**
 * Invented demo people of the fictional Nordvale desk, one per role and one with two roles:
 * the one list, used by the local identity provider and by the demo data (scripts/demo/market.ts).
 */
export interface DemoPerson {
  key: string;
  name: string;
  email: string;
  groups: string[];
  /** what this person shows in the demo */
  note: string;
}

export const IDP_GROUPS = ['lw-meteorologists', 'lw-traders', 'lw-risk', 'lw-admins'] as const;

export const DEMO_PEOPLE: readonly DemoPerson[] = [
  { key: 'meteorologist', name: 'Ilse Varga', email: 'ilse.varga@nordvale.example', groups: ['lw-meteorologists'], note: 'meteorologist' },
  { key: 'trader', name: 'Tomas Brekke', email: 'tomas.brekke@nordvale.example', groups: ['lw-traders'], note: 'trader' },
  { key: 'risk', name: 'Maren Solvik', email: 'maren.solvik@nordvale.example', groups: ['lw-risk'], note: 'risk' },
  { key: 'admin', name: 'Anders Lund', email: 'anders.lund@nordvale.example', groups: ['lw-admins'], note: 'admin' },
  {
    key: 'meteorologist-trader',
    name: 'Kari Holm',
    email: 'kari.holm@nordvale.example',
    groups: ['lw-meteorologists', 'lw-traders'],
    note: 'meteorologist and trader',
  },
];
