/**
 * The regime-call e-mail (subject, HTML and text) and the strict markdown the narrative is
 * written in. Everything the meteorologist typed is HTML-escaped before any markup is added, so
 * no tag, attribute or script from the input survives: only the few elements made here.
 */
import { CAUTIONS } from '@shared/cautions.ts';

const HTML_ESCAPES: Record<string, string> = { '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' };

export function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => HTML_ESCAPES[c]);
}

/** Only these link targets become links; anything else (javascript:, data:, relative) stays text. */
const SAFE_URL = /^(https?:\/\/|mailto:)[^\s]+$/i;

/**
 * Inline markdown on one escaped line: [text](url), **strong**, *em* / _em_. Links are taken out
 * first (as placeholders) so emphasis never reaches inside an href.
 */
function renderInline(raw: string): string {
  const links: string[] = [];
  let out = escapeHtml(raw).replace(/\[([^\]\n]+)\]\(([^)\s]+)\)/g, (whole, text: string, url: string) => {
    // url is escaped already; &amp; is the only entity a sane URL holds, so test the decoded form.
    const plain = url.replace(/&amp;/g, '&');
    if (!SAFE_URL.test(plain) || /&(lt|gt|quot|#39);/.test(url)) return whole;
    links.push(`<a href="${url}" rel="noopener noreferrer">${text}</a>`);
    return `\u0000${links.length - 1}\u0000`;
  });
  out = out
    .replace(/\*\*(?=\S)(.+?)(?<=\S)\*\*/g, '<strong>$1</strong>')
    .replace(/\*(?=\S)(.+?)(?<=\S)\*/g, '<em>$1</em>')
    .replace(/(^|[\s(])_(?=\S)(.+?)(?<=\S)_(?=$|[\s).,;:!?])/g, '$1<em>$2</em>');
  // eslint-disable-next-line no-control-regex
  return out.replace(/\u0000(\d+)\u0000/g, (_m, i: string) => links[Number(i)]);
}

type Block = { kind: 'p'; lines: string[] } | { kind: 'ul' | 'ol'; items: string[] };

/**
 * A small, strict markdown: paragraphs (blank-line separated), "- " / "* " lists, "1. " lists,
 * **strong**, *em*, _em_ and http(s)/mailto links. All other input is text, escaped.
 */
export function renderMarkdown(source: string): string {
  const blocks: Block[] = [];
  for (const line of source.replace(/\r\n?/g, '\n').split('\n')) {
    const bullet = /^\s*[-*]\s+(.*)$/.exec(line);
    const numbered = /^\s*\d{1,3}[.)]\s+(.*)$/.exec(line);
    const last = blocks[blocks.length - 1];
    if (bullet || numbered) {
      const kind = bullet ? 'ul' : 'ol';
      const text = (bullet ?? numbered)![1];
      if (last?.kind === kind) last.items.push(text);
      else blocks.push({ kind, items: [text] });
    } else if (line.trim() === '') {
      blocks.push({ kind: 'p', lines: [] });
    } else if (last?.kind === 'p') {
      last.lines.push(line.trim());
    } else {
      blocks.push({ kind: 'p', lines: [line.trim()] });
    }
  }
  return blocks
    .map((b) => {
      if (b.kind === 'p') return b.lines.length ? `<p>${b.lines.map(renderInline).join('<br>')}</p>` : '';
      return `<${b.kind}>${b.items.map((i) => `<li>${renderInline(i)}</li>`).join('')}</${b.kind}>`;
    })
    .filter(Boolean)
    .join('\n');
}

export interface CallMailContent {
  version: number;
  validFrom: string;
  validTo: string;
  confidence: string;
  /** each regime period with its resolved name */
  regimes: { from: string; to: string; name: string }[];
  weights: { label: string; pct: number }[];
  weightBasis: string;
  keyRisks: string;
  narrative: string;
  correctionReason: string | null;
  author: string | null;
  /** weighted P50 per region over the valid period, when the linked runs have signal rows */
  summary: { region: string; days: number; precipMm: number | null; inflowGwh: number | null; solarGwh: number | null }[];
  publicUrl: string;
}

export interface RenderedMail {
  subject: string;
  html: string;
  text: string;
}

function fmt(v: number | null, digits: number, unit: string): string {
  return v === null || !Number.isFinite(v) ? '–' : `${v.toFixed(digits)} ${unit}`;
}

function periodText(from: string, to: string): string {
  return from === to ? from : `${from} to ${to}`;
}

export function renderCallMail(c: CallMailContent): RenderedMail {
  const regimeNames = [...new Set(c.regimes.map((r) => r.name))].join(' / ') || 'no regime named';
  const corr = c.version > 1 ? ` (correction, version ${c.version})` : '';
  const subject = `Regime call ${periodText(c.validFrom, c.validTo)}: ${regimeNames}, confidence ${c.confidence}${corr}`;
  return { subject, text: renderText(c, subject), html: renderHtml(c, subject) };
}

function renderText(c: CallMailContent, subject: string): string {
  const lines: string[] = [subject, ''];
  if (c.correctionReason) lines.push(`Correction of the earlier version: ${c.correctionReason}`, '');
  lines.push(`Valid: ${periodText(c.validFrom, c.validTo)}`, `Confidence: ${c.confidence}`, '', 'Regimes:');
  for (const r of c.regimes) lines.push(`  ${periodText(r.from, r.to)}: ${r.name}`);
  lines.push('', `Scenario weights (per ${c.weightBasis}):`);
  for (const w of c.weights) lines.push(`  ${w.label}: ${w.pct.toFixed(1)} %`);
  if (c.keyRisks.trim()) lines.push('', 'Key risks:', c.keyRisks.trim());
  if (c.narrative.trim()) lines.push('', c.narrative.trim());
  if (c.summary.length) {
    lines.push('', 'Weighted P50 over the valid period (linked runs):');
    for (const s of c.summary) {
      lines.push(`  ${s.region} (${s.days} d): precipitation ${fmt(s.precipMm, 1, 'mm')}, inflow ${fmt(s.inflowGwh, 2, 'GWh')}, solar ${fmt(s.solarGwh, 2, 'GWh')}`);
    }
  }
  if (c.author) lines.push('', `Issued by ${c.author}.`);
  lines.push('', 'Cautions:', ...CAUTIONS.map((x) => `- ${x}`), '', `Liftwise: ${c.publicUrl}/regime-calls`);
  return lines.join('\n') + '\n';
}

const TABLE = 'border-collapse:collapse;font-family:Arial,sans-serif;font-size:13px';
const CELL = 'border:1px solid #CBD5E1;padding:3px 8px;text-align:left';
const NUM = `${CELL};text-align:right;font-family:'IBM Plex Mono',Consolas,monospace`;

function renderHtml(c: CallMailContent, subject: string): string {
  const e = escapeHtml;
  const parts: string[] = [`<h2 style="font-family:Arial,sans-serif;font-size:17px">${e(subject)}</h2>`];
  if (c.correctionReason) parts.push(`<p style="color:#B42318"><strong>Correction of the earlier version:</strong> ${e(c.correctionReason)}</p>`);
  parts.push(`<p><strong>Valid:</strong> ${e(periodText(c.validFrom, c.validTo))} &nbsp; <strong>Confidence:</strong> ${e(c.confidence)}</p>`);
  parts.push(
    `<table style="${TABLE}"><tr><th style="${CELL}">Period</th><th style="${CELL}">Regime</th></tr>` +
      c.regimes.map((r) => `<tr><td style="${CELL}">${e(periodText(r.from, r.to))}</td><td style="${CELL}">${e(r.name)}</td></tr>`).join('') +
      '</table>',
  );
  parts.push(
    `<h3 style="font-size:14px">Scenario weights (per ${e(c.weightBasis)})</h3><table style="${TABLE}">` +
      `<tr><th style="${CELL}">${c.weightBasis === 'cluster' ? 'Cluster' : 'Member'}</th><th style="${CELL}">Weight (%)</th></tr>` +
      c.weights.map((w) => `<tr><td style="${CELL}">${e(w.label)}</td><td style="${NUM}">${w.pct.toFixed(1)} %</td></tr>`).join('') +
      '</table>',
  );
  if (c.keyRisks.trim()) parts.push(`<h3 style="font-size:14px">Key risks</h3>${renderMarkdown(c.keyRisks)}`);
  if (c.narrative.trim()) parts.push(`<h3 style="font-size:14px">Narrative</h3>${renderMarkdown(c.narrative)}`);
  if (c.summary.length) {
    parts.push(
      `<h3 style="font-size:14px">Weighted P50 over the valid period (linked runs)</h3><table style="${TABLE}">` +
        `<tr><th style="${CELL}">Region</th><th style="${CELL}">Days</th><th style="${CELL}">Precipitation (mm)</th><th style="${CELL}">Inflow (GWh)</th><th style="${CELL}">Solar (GWh)</th></tr>` +
        c.summary
          .map(
            (s) =>
              `<tr><td style="${CELL}">${e(s.region)}</td><td style="${NUM}">${s.days}</td><td style="${NUM}">${fmt(s.precipMm, 1, 'mm')}</td>` +
              `<td style="${NUM}">${fmt(s.inflowGwh, 2, 'GWh')}</td><td style="${NUM}">${fmt(s.solarGwh, 2, 'GWh')}</td></tr>`,
          )
          .join('') +
        '</table>',
    );
  }
  if (c.author) parts.push(`<p>Issued by ${e(c.author)}.</p>`);
  parts.push(
    `<div style="border-top:1px solid #CBD5E1;margin-top:12px;color:#475569;font-size:12px"><strong>Cautions</strong><ul>` +
      CAUTIONS.map((x) => `<li>${e(x)}</li>`).join('') +
      `</ul><a href="${e(c.publicUrl)}/regime-calls">Open Liftwise</a></div>`,
  );
  return `<!doctype html><html><body style="font-family:Arial,sans-serif;font-size:14px;color:#0F172A">${parts.join('\n')}</body></html>`;
}
