/** The local identity provider's HTML: no inline scripts (the CSP allows only same-origin script files). */
import { DEMO_PEOPLE, IDP_GROUPS } from './people.ts';

const esc = (s: string) => s.replace(/[<>&"']/g, (c) => `&#${c.charCodeAt(0)};`);

const STYLE = `<style>
body{font-family:system-ui,sans-serif;background:#f1f4f8;color:#1e2733;margin:0;padding:2rem;font-size:14px}
main{max-width:34rem;margin:0 auto;background:#fff;border:1px solid #d5dbe3;border-radius:6px;padding:1.25rem 1.5rem}
h1{font-size:1.1rem;margin:0 0 .25rem}p{color:#5b6675;margin:.25rem 0 1rem}
ul{list-style:none;padding:0;margin:0 0 1.25rem}li{margin:.35rem 0}
button{font:inherit;cursor:pointer;border-radius:4px}
.person{width:100%;text-align:left;border:1px solid #d5dbe3;background:#fff;padding:.5rem .75rem}
.person:hover{border-color:#2E5BFF}.person small{color:#5b6675;display:block}
.primary{background:#2E5BFF;color:#fff;border:0;padding:.45rem .9rem}
fieldset{border:1px solid #d5dbe3;border-radius:4px;margin:0 0 .75rem}label{display:block;margin:.3rem 0}
input[type=text],input[type=email]{font:inherit;width:100%;box-sizing:border-box;padding:.3rem .4rem;border:1px solid #c3cbd6;border-radius:3px}
.badge{display:inline-block;background:#B42318;color:#fff;font-size:.7rem;padding:.05rem .4rem;border-radius:3px;margin-left:.4rem}
</style>`;

function page(title: string, body: string, script?: string): string {
  return `<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1"><title>${esc(title)}</title>${STYLE}</head><body><main>${body}</main>${script ? `<script src="${esc(script)}"></script>` : ''}</body></html>`;
}

function hidden(fields: Record<string, string | undefined>): string {
  return Object.entries(fields)
    .filter(([, v]) => v !== undefined)
    .map(([k, v]) => `<input type="hidden" name="${esc(k)}" value="${esc(v!)}">`)
    .join('');
}

/** One click per demo person, and a form for a custom person with chosen groups. */
export function pickerPage(action: string, samlRequest: string, relayState: string | undefined): string {
  const carry = hidden({ SAMLRequest: samlRequest, RelayState: relayState });
  const people = DEMO_PEOPLE.map(
    (p) =>
      `<li><form method="post" action="${esc(action)}">${carry}<input type="hidden" name="person" value="${esc(p.key)}">` +
      `<button class="person" type="submit"><strong>${esc(p.name)}</strong> · ${esc(p.note)}<small>${esc(p.email)} · ${esc(p.groups.join(', '))}</small></button></form></li>`,
  ).join('');
  const groupBoxes = IDP_GROUPS.map((g) => `<label><input type="checkbox" name="groups" value="${esc(g)}"> ${esc(g)}</label>`).join('');
  return page(
    'Local identity provider',
    `<h1>Local identity provider<span class="badge">development only</span></h1>` +
      `<p>Stands in for the organisation's identity provider. Choose who signs in to Liftwise.</p>` +
      `<ul>${people}</ul>` +
      `<form method="post" action="${esc(action)}">${carry}<input type="hidden" name="person" value="custom">` +
      `<fieldset><legend>Someone else</legend>` +
      `<label>Name <input type="text" name="name" required maxlength="120"></label>` +
      `<label>E-mail <input type="email" name="email" required maxlength="200"></label>${groupBoxes}` +
      `<label>Other groups (comma-separated) <input type="text" name="otherGroups" maxlength="500"></label></fieldset>` +
      `<button class="primary" type="submit">Sign in as this person</button></form>`,
  );
}

/** The signed response on its way to Liftwise: a visible button, and a same-origin script that presses it. */
export function autoPostPage(acsUrl: string, samlResponse: string, relayState: string | undefined, scriptUrl: string): string {
  return page(
    'Signing in to Liftwise',
    `<h1>Signing in to Liftwise</h1><p>If nothing happens, press the button.</p>` +
      `<form method="post" action="${esc(acsUrl)}" data-auto-submit>${hidden({ SAMLResponse: samlResponse, RelayState: relayState })}` +
      `<button class="primary" type="submit">Continue to Liftwise</button></form>`,
    scriptUrl,
  );
}

export function errorPage(message: string): string {
  return page('Local identity provider', `<h1>This sign-in request cannot be answered</h1><p>${esc(message)}</p><p><a href="/sign-in">Back to Liftwise</a></p>`);
}

export const AUTO_SUBMIT_SCRIPT = "document.querySelector('form[data-auto-submit]')?.submit();\n";
