/**
 * The streaming CSV reader against RFC 4180's own examples and against csv-parse (a
 * general-purpose CSV library, npm csv-parse 6.1.0) on random RFC 4180 files, with chunk
 * sizes down to one byte so every record boundary falls across a chunk boundary.
 */
import { parse } from 'csv-parse/sync';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { readCsv } from '../../../src-main/import/csv.js';
import { tempDir, write } from './helpers.js';

async function records(file: string, chunkSize?: number): Promise<{ line: number; fields: string[] }[]> {
  const out: { line: number; fields: string[] }[] = [];
  await readCsv(
    file,
    (row) => {
      const fields: string[] = [];
      for (let i = 0; i < row.count; i++) fields.push(row.text(i));
      out.push({ line: row.line, fields });
    },
    chunkSize ? { chunkSize } : {},
  );
  return out;
}

describe('RFC 4180, section 2 examples', () => {
  it('rules 1-7, each example as printed in the RFC', async () => {
    const dir = tempDir();
    const cases: [string, string[][]][] = [
      ['aaa,bbb,ccc\r\nzzz,yyy,xxx\r\n', [['aaa', 'bbb', 'ccc'], ['zzz', 'yyy', 'xxx']]], // rule 1
      ['aaa,bbb,ccc\r\nzzz,yyy,xxx', [['aaa', 'bbb', 'ccc'], ['zzz', 'yyy', 'xxx']]], // rule 2: last line break optional
      ['field_name,field_name,field_name\r\naaa,bbb,ccc\r\n', [['field_name', 'field_name', 'field_name'], ['aaa', 'bbb', 'ccc']]], // rule 3
      ['"aaa","bbb","ccc"\r\nzzz,yyy,xxx', [['aaa', 'bbb', 'ccc'], ['zzz', 'yyy', 'xxx']]], // rule 5
      ['"aaa","b\r\nbb","ccc"\r\nzzz,yyy,xxx', [['aaa', 'b\r\nbb', 'ccc'], ['zzz', 'yyy', 'xxx']]], // rule 6
      ['"aaa","b""bb","ccc"', [['aaa', 'b"bb', 'ccc']]], // rule 7
      ['a,,c\n,\n', [['a', '', 'c'], ['', '']]], // empty fields
    ];
    for (const [text, expected] of cases) {
      for (const chunk of [1, 2, 3, 7, 1 << 20]) {
        const got = await records(write(dir, 'r.csv', text), chunk);
        expect(got.map((r) => r.fields), `${JSON.stringify(text)} in chunks of ${chunk}`).toEqual(expected);
      }
    }
  });

  it('line numbers count physical lines, including breaks inside quotes; empty lines are skipped', async () => {
    const dir = tempDir();
    const got = await records(write(dir, 'l.csv', 'h1,h2\n"a\nb\nc",1\n\n"x",2\r\nlast,3'), 2);
    expect(got.map((r) => r.line)).toEqual([1, 2, 6, 7]);
  });

  it('a leading UTF-8 byte-order mark is not part of the first field; multi-byte characters split across chunks survive', async () => {
    const dir = tempDir();
    const text = '\ufeffnamé,€uro\n日本,𝄞\n';
    for (const chunk of [1, 2, 3, 5]) {
      expect((await records(write(dir, 'b.csv', text), chunk)).map((r) => r.fields), `chunk ${chunk}`).toEqual([
        ['namé', '€uro'],
        ['日本', '𝄞'],
      ]);
    }
  });
});

describe('against csv-parse on random RFC 4180 files', () => {
  const field = fc.oneof(
    fc.stringMatching(/^[a-z0-9 .+-]{0,8}$/),
    fc.string({ unit: fc.constantFrom('a', 'Z', ',', '"', '\n', '\r\n', ' ', 'é', '€', '1'), maxLength: 10 }),
  );
  const quote = (s: string, force: boolean) => (force || /[",\r\n]/.test(s) ? `"${s.replaceAll('"', '""')}"` : s);

  it('same records, field for field (300 files, chunk sizes 1-64)', async () => {
    const dir = tempDir();
    await fc.assert(
      fc.asyncProperty(
        fc.integer({ min: 1, max: 5 }).chain((width) => fc.tuple(fc.array(fc.array(field, { minLength: width, maxLength: width }), { minLength: 1, maxLength: 8 }), fc.array(fc.boolean(), { minLength: 40, maxLength: 40 }), fc.boolean(), fc.integer({ min: 1, max: 64 }))),
        async ([rows, forceQuotes, crlf, chunk]) => {
          // a record made of one empty unquoted field is an empty line, which both skip: quote it
          const body = rows.map((r, i) => r.map((f, j) => quote(f, forceQuotes[(i * 5 + j) % 40] || (r.length === 1 && f === ''))).join(',')).join(crlf ? '\r\n' : '\n');
          const file = write(dir, 'p.csv', `${body}${crlf ? '\r\n' : '\n'}`);
          const reference = parse(body, { relax_column_count: true, skip_empty_lines: true }) as string[][];
          const ours = (await records(file, chunk)).map((r) => r.fields);
          expect(ours).toEqual(reference);
        },
      ),
      { numRuns: 300, seed: 4180 },
    );
  });
});
