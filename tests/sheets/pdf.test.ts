/**
 * The renderer checked with independent tools from Debian's poppler-utils
 * (pdftotext, pdfinfo, pdffonts, pdfimages) and qpdf --check.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { buildSheetDocument, type SheetDocument } from '../../src/sheets/model.js';
import { renderSheet } from '../../src/sheets/pdf.js';
import { doseSheet, jarTestEvaluationSheet, PERMANGANATE_SAFETY } from './fixtures.js';
import { pdfFile, pdfText, requireTools, run } from './tools.js';

let dose: Buffer;
let dosePath: string;
let pages: number;

beforeAll(async () => {
  requireTools('pdftotext', 'pdfinfo', 'pdffonts', 'pdfimages', 'qpdf');
  dose = await renderSheet(doseSheet());
  dosePath = pdfFile(dose, 'dose');
  pages = Number(/Pages:\s+(\d+)/.exec(run('pdfinfo', [dosePath]))![1]);
});

describe('dose sheet PDF', () => {
  it('passes qpdf --check', () => {
    expect(run('qpdf', ['--check', dosePath])).toContain('No syntax or stream encoding errors found');
  });

  it('is A4, has the title and dates from the document', () => {
    const info = run('pdfinfo', ['-isodates', dosePath]);
    expect(info).toMatch(/Page size:\s+595\.28 x 841\.89 pts \(A4\)/);
    expect(info).toMatch(/Title:\s+Permanganate dose for iron and manganese removal/);
    expect(info).toMatch(/CreationDate:\s+2025-03-14T09:05:00/);
    expect(pages).toBeGreaterThanOrEqual(2);
  });

  it('embeds the DejaVu fonts (subset) and no other font', () => {
    const fonts = run('pdffonts', [dosePath]).split('\n').slice(2).filter((l) => l.trim() !== '');
    expect(fonts).toHaveLength(2); // DejaVu Sans and DejaVu Sans Bold
    for (const line of fonts) {
      expect(line).toMatch(/^[A-Z]{6}\+DejaVuSans(-Bold)? /);
      expect(line).toMatch(/CID TrueType\s+Identity-H\s+yes\s+yes\s+yes/);
    }
  });

  it('pdftotext finds title, safety heading, result and formulas (subscripts come out as plain digits, the charge minus as U+2212)', () => {
    const text = pdfText(dosePath);
    expect(text).toContain('Permanganate dose for iron and manganese removal');
    expect(text).toContain('Safety: potassium permanganate');
    expect(text).toContain('2.0 mg/L as KMnO4');
    expect(text).toContain('3Fe2+ + MnO4\u2212 + 7H2O → 3Fe(OH)3(s) + MnO2(s) + 5H+');
    expect(text).toContain('MnO4\u2212 + 4H+ + 3e\u2212 → MnO2(s) + 2H2O');
    expect(text).toContain('Prepared by'.toUpperCase());
  });

  it('every page carries the disclaimer, "Page n of N", the sheet id and the content SHA-256', () => {
    const doc = doseSheet();
    for (let p = 1; p <= pages; p++) {
      const text = pdfText(dosePath, p);
      expect(text).toContain(`Page ${p} of ${pages}`);
      expect(text).toContain('This sheet supports, and does not replace, the judgement of a licensed operator or engineer.');
      expect(text).toContain('Local regulations, permits and codes govern.');
      expect(text).toContain(`Sheet ${doc.id}`);
      expect(text).toContain(doc.contentSha256);
    }
  });

  it('the same document renders to the same bytes; another issue time does not', async () => {
    const again = await renderSheet(doseSheet());
    expect(again.equals(dose)).toBe(true);
    // the process-wide caches (layouts, encoded text, font subsets, ToUnicode maps) give the
    // bytes a first, cold render gave, also after documents with other text and glyphs
    const { contentSha256: _c, ...other } = jarTestEvaluationSheet();
    await renderSheet(buildSheetDocument({ ...other, id: 'OTHER', sections: [{ heading: 'Zeichen äöü ÆØÅ', blocks: [{ kind: 'paragraph', text: 'Müller, Ærø, Ñandú: 3 × 4 ≈ 12' }] }] }));
    await renderSheet(jarTestEvaluationSheet());
    expect((await renderSheet(doseSheet())).equals(dose)).toBe(true);
    const { contentSha256: _h, ...draft } = doseSheet();
    const later = await renderSheet(buildSheetDocument({ ...draft, issuedAt: '2025-03-14T09:06:00Z' }));
    expect(later.equals(dose)).toBe(false);
  });

  it('renders US Letter', async () => {
    const path = pdfFile(await renderSheet(doseSheet({ pageSize: 'LETTER' })), 'letter');
    expect(run('pdfinfo', [path])).toMatch(/Page size:\s+612 x 792 pts \(letter\)/);
    expect(run('qpdf', ['--check', path])).toContain('No syntax or stream encoding errors found');
  });
});

describe('jar-test evaluation PDF', () => {
  let path: string;
  beforeAll(async () => {
    path = pdfFile(await renderSheet(jarTestEvaluationSheet()), 'jar');
  });

  it('draws the plot as vectors (no images) with axis labels and legend as text', () => {
    expect(run('pdfimages', ['-list', path]).split('\n').filter((l) => /^\s*\d+/.test(l))).toHaveLength(0);
    const text = pdfText(path);
    expect(text).toContain('Applied dose (mg/L as KMnO₄)');
    expect(text).toContain('Residual (mg/L)');
    expect(text).toContain('Residual after 30 min');
    expect(text).toContain('target residual 0.05 mg/L');
    expect(text).toContain('Fit, 30 min: residual = 0.842 × dose − 1.54');
  });

  it('passes qpdf --check', () => {
    expect(run('qpdf', ['--check', path])).toContain('No syntax or stream encoding errors found');
  });
});

describe('text encoding', () => {
  it('every printable ASCII character and the symbols of the sheets come back from pdftotext', async () => {
    // glyph codes are written as literal strings: codes 0x0a, 0x0d, 0x28, 0x29 and 0x5c must be escaped
    const all = Array.from({ length: 0x7f - 0x21 }, (_, i) => String.fromCharCode(0x21 + i)).join('');
    const ascii = [all.slice(0, 32), all.slice(32, 64), all.slice(64)].join(' '); // words that fit a line
    const symbols = '°±×–—’“”•…−→⇌≤≥≈µ²³· äöüéèçñ ÆØÅ';
    const { contentSha256: _h, ...draft } = jarTestEvaluationSheet();
    const doc = buildSheetDocument({ ...draft, id: 'ASCII', sections: [{ heading: 'Characters', blocks: [{ kind: 'paragraph', text: ascii }, { kind: 'paragraph', text: symbols }] }] });
    const path = pdfFile(await renderSheet(doc), 'ascii');
    const text = pdfText(path);
    expect(text).toContain(ascii);
    expect(text).toContain(symbols);
  });
});

describe('page breaks', () => {
  function longTable(rows: number): SheetDocument {
    const base = jarTestEvaluationSheet();
    const { contentSha256: _h, ...draft } = base;
    return buildSheetDocument({
      ...draft,
      id: 'LONG-TABLE',
      sections: [
        {
          heading: 'Hourly log',
          blocks: [
            {
              kind: 'table',
              caption: 'Hourly readings',
              columns: [{ header: 'Hour' }, { header: 'Residual', unit: 'mg/L' }, { header: 'Remark' }],
              rows: Array.from({ length: rows }, (_, i) => [`H${String(i).padStart(3, '0')}`, (i / 100).toFixed(2), i % 7 === 0 ? 'filter backwash, residual checked twice' : '']),
            },
          ],
        },
      ],
      safety: PERMANGANATE_SAFETY,
    });
  }

  it('a table longer than a page continues with its header repeated, no row lost', async () => {
    const rows = 120;
    const path = pdfFile(await renderSheet(longTable(rows)), 'long');
    const n = Number(/Pages:\s+(\d+)/.exec(run('pdfinfo', [path]))![1]);
    expect(n).toBeGreaterThanOrEqual(3);
    const page2 = pdfText(path, 2);
    expect(page2).toContain('Hourly readings (continued)');
    expect(page2).toMatch(/Hour Residual Remark mg\/L/);
    const all = pdfText(path);
    for (let i = 0; i < rows; i++) expect(all).toContain(`H${String(i).padStart(3, '0')}`);
    expect(run('qpdf', ['--check', path])).toContain('No syntax or stream encoding errors found');
  });
});
