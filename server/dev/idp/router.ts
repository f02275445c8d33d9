/**
 * The local identity provider, mounted at /idp in development and tests when no real one is
 * configured (never in production). Stateless: the AuthnRequest travels through its pages.
 */
import { Router } from 'express';
import { z } from 'zod';
import { DEMO_PEOPLE, type DemoPerson } from './people.ts';
import { AUTO_SUBMIT_SCRIPT, autoPostPage, errorPage, pickerPage } from './pages.ts';
import { parseAuthnRequest, signedResponse, type LocalIdp } from './response.ts';

export const LOCAL_IDP_MOUNT = '/idp';

const text = z.string().max(4000);
const pickSchema = z.object({
  SAMLRequest: z.string().min(1).max(20_000),
  RelayState: text.optional(),
  person: z.string().max(100),
  name: text.optional(),
  email: text.optional(),
  groups: z.union([z.string(), z.array(z.string())]).optional(),
  otherGroups: text.optional(),
});

function chosenPerson(body: z.infer<typeof pickSchema>): Pick<DemoPerson, 'name' | 'email' | 'groups'> {
  if (body.person !== 'custom') {
    const person = DEMO_PEOPLE.find((p) => p.key === body.person);
    if (!person) throw new Error(`no demo person "${body.person}"`);
    return person;
  }
  const name = body.name?.trim();
  const email = body.email?.trim();
  if (!name || !email || !/^[^\s@]+@[^\s@]+$/.test(email)) throw new Error('a custom person needs a name and an e-mail address');
  const checked = body.groups === undefined ? [] : Array.isArray(body.groups) ? body.groups : [body.groups];
  const other = (body.otherGroups ?? '').split(',').map((g) => g.trim());
  return { name, email, groups: [...new Set([...checked, ...other].filter(Boolean))] };
}

export function localIdpRouter(local: LocalIdp): Router {
  const router = Router();
  const ssoPath = new URL(local.settings.ssoUrl).pathname;
  const scriptUrl = `${LOCAL_IDP_MOUNT}/auto-submit.js`;

  router.get('/sso', async (req, res) => {
    const samlRequest = typeof req.query.SAMLRequest === 'string' ? req.query.SAMLRequest : '';
    const relayState = typeof req.query.RelayState === 'string' ? req.query.RelayState : undefined;
    try {
      await parseAuthnRequest(local, samlRequest);
    } catch (err) {
      res.status(400).type('html').send(errorPage(`The request from Liftwise could not be read: ${(err as Error).message}`));
      return;
    }
    res.type('html').send(pickerPage(ssoPath, samlRequest, relayState));
  });

  router.post('/sso', async (req, res) => {
    const parsed = pickSchema.safeParse(req.body);
    if (!parsed.success) {
      res.status(400).type('html').send(errorPage('The form is incomplete.'));
      return;
    }
    try {
      const request = await parseAuthnRequest(local, parsed.data.SAMLRequest);
      const person = chosenPerson(parsed.data);
      const samlResponse = await signedResponse(local, person, request.id);
      res.type('html').send(autoPostPage(local.settings.acsUrl, samlResponse, parsed.data.RelayState, scriptUrl));
    } catch (err) {
      res.status(400).type('html').send(errorPage((err as Error).message));
    }
  });

  router.get('/auto-submit.js', (_req, res) => {
    res.type('text/javascript').send(AUTO_SUBMIT_SCRIPT);
  });

  router.get('/metadata', (_req, res) => {
    res.type('application/xml').send(local.idp.getMetadata());
  });
  return router;
}
