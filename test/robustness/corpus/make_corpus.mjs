#!/usr/bin/env node
/**
 * Writes the hostile CSV corpus next to this script (deterministic: the same bytes on
 * every run). The files are committed; rerun this only to change the corpus, then update
 * the table in test/robustness/corpus.test.ts (one row per file).
 *
 *   node test/robustness/corpus/make_corpus.mjs
 *
 * Every name, value and date is invented. The 64 MB single line is not here: the test
 * generates it into a temporary folder.
 */
import { mkdirSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const here = path.dirname(fileURLToPath(import.meta.url));
const files = {};
const put = (name, content) => {
  files[name] = typeof content === 'string' ? Buffer.from(content, 'utf8') : content;
};

const H = 'date,asset,price\n';
const ok3 = '2023-01-31,kestrel-mills,12.50\n2023-02-28,kestrel-mills,12.75\n';

// --- truncation and shape
put('truncated_row.csv', `${H}${ok3}2023-03-31,kestrel-mills\n2023-04-28,kestrel-mills,13.00\n`);
put('truncated_quote.csv', `${H}${ok3}2023-03-31,"kestrel-mills,13.00\n`);
put('truncated_mid_date.csv', `${H}${ok3}2023-0`);
put('decimal_comma.csv', `${H}${ok3}2023-03-31,kestrel-mills,13,25\n`);
put('missing_column.csv', 'date,asset,value\n2023-01-31,kestrel-mills,12.50\n');
put('empty.csv', '');
put('header_only.csv', H);
put('only_blank_lines.csv', '\n\n\r\n\n');

// --- delimiters
put('semicolon.csv', 'date;asset;price\n2023-01-31;kestrel-mills;12,50\n');
put('tab.csv', 'date\tasset\tprice\n2023-01-31\tkestrel-mills\t12.50\n');
put('pipe.csv', 'date|asset|price\n2023-01-31|kestrel-mills|12.50\n');

// --- quoting
put('quote_in_unquoted.csv', `${H}2023-01-31,kestrel"mills,12.50\n`);
put('text_after_quote.csv', `${H}2023-01-31,"kestrel-mills"x,12.50\n`);
put('embedded_newline_then_error.csv', `${H}2023-01-31,"kestrel\nmills",12.50\n2023-02-28,"kestrel\nmills",12.75\n2023-03-31,"kestrel\nmills",twelve\n`);
put('embedded_newline_in_number.csv', `${H}2023-01-31,kestrel-mills,"12.\n50"\n`);
put('mixed_quoting_ok.csv', `${H}"2023-01-31",kestrel-mills,"12.50"\n2023-02-28,"kestrel-mills",12.75\n"2023-01-31","tern ""north"" yard","8.00"\n2023-02-28,"tern ""north"" yard",8.10\n`);
put('embedded_newline_ok.csv', `${H}2023-01-31,"heron\nquay",5.00\n2023-02-28,"heron\nquay",5.10\n2023-03-31,"heron\r\nquay",5.20\n`);

// --- encodings
put('bom_utf8.csv', Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), Buffer.from(`${H}${ok3}`)]));
put('latin1.csv', Buffer.concat([Buffer.from(`${H}${ok3}2023-01-31,caf`), Buffer.from([0xe9]), Buffer.from('-rondel,4.00\n')]));
put('utf16le_bom.csv', Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(`${H}${ok3}`, 'utf16le')]));
put('utf16be_bom.csv', Buffer.concat([Buffer.from([0xfe, 0xff]), Buffer.from(`${H}${ok3}`, 'utf16le').swap16()]));
put('utf16le_nobom.csv', Buffer.from(`${H}${ok3}`, 'utf16le'));
put('nul_byte.csv', `${H}2023-01-31,kestrel\u0000mills,12.50\n`);
put('overlong_utf8.csv', Buffer.concat([Buffer.from(`${H}2023-01-31,kestrel`), Buffer.from([0xc0, 0xaf]), Buffer.from('mills,12.50\n')]));
put('surrogate_utf8.csv', Buffer.concat([Buffer.from(`${H}2023-01-31,kestrel`), Buffer.from([0xed, 0xa0, 0x80]), Buffer.from('mills,12.50\n')]));
put('unicode_names_ok.csv', `${H}2023-01-31,ærøby-væveri,3.10\n2023-02-28,ærøby-væveri,3.20\n2023-01-31,šumperk-ořechy,7.00\n2023-02-28,šumperk-ořechy,7.70\n2023-01-31,水門倉庫,90\n2023-02-28,水門倉庫,91\n`);
{
  // seeded pseudo-random bytes (a linear congruential generator), a valid header first
  let s = 20261201;
  const junk = Buffer.alloc(4096);
  for (let i = 0; i < junk.length; i++) {
    s = (Math.imul(s, 1103515245) + 12345) >>> 0;
    junk[i] = s >>> 24;
  }
  put('binary_garbage.csv', Buffer.concat([Buffer.from(H), junk]));
}

// --- line endings and layout that are accepted
put('crlf_ok.csv', `${H}${ok3}`.replace(/\n/g, '\r\n'));
put('lone_cr_ok.csv', `${H}${ok3}`.replace(/\n/g, '\r'));
put('no_final_newline_ok.csv', `${H}${ok3}`.trimEnd());
put('blank_lines_ok.csv', `${H}\n2023-01-31,kestrel-mills,12.50\n\n\n2023-02-28,kestrel-mills,12.75\n\n`);
put('extra_columns_ok.csv', 'date,asset,price,analyst_note\n2023-01-31,kestrel-mills,12.50,steady\n2023-02-28,kestrel-mills,12.75,\n');

// --- numbers
put('huge_exponent.csv', `${H}${ok3}2023-03-31,kestrel-mills,1e400\n`);
put('huge_integer.csv', `${H}${ok3}2023-03-31,kestrel-mills,${'7'.repeat(400)}\n`);
put('huge_negative.csv', `${H}${ok3}2023-03-31,kestrel-mills,-1.5e999\n`);
put('tiny_exponent.csv', `${H}${ok3}2023-03-31,kestrel-mills,1e-400\n`);
put('nan.csv', `${H}${ok3}2023-03-31,kestrel-mills,NaN\n`);
put('nan_lower.csv', `${H}${ok3}2023-03-31,kestrel-mills,nan\n`);
put('inf.csv', `${H}${ok3}2023-03-31,kestrel-mills,inf\n`);
put('neg_infinity.csv', `${H}${ok3}2023-03-31,kestrel-mills,-Infinity\n`);
put('na_spreadsheet.csv', `${H}${ok3}2023-03-31,kestrel-mills,#N/A\n`);
put('hex_number.csv', `${H}${ok3}2023-03-31,kestrel-mills,0x1A\n`);
put('thousands_unasked.csv', `${H}2023-01-31,kestrel-mills,"1,250.00"\n`);
put('zero_price.csv', `${H}${ok3}2023-03-31,kestrel-mills,0\n`);
put('negative_price.csv', `${H}${ok3}2023-03-31,kestrel-mills,-12.5\n`);
put('negative_dividend.csv', 'date,asset,price,dividend\n2023-01-31,kestrel-mills,12.50,\n2023-02-28,kestrel-mills,12.75,-0.10\n');
put('number_forms_ok.csv', `${H}2023-01-31,plover-works,+12\n2023-02-28,plover-works, 12.5 \n2023-03-31,plover-works,12.\n2023-04-28,plover-works,1.25E+1\n2023-05-31,plover-works,1250e-2\n2023-06-30,plover-works,.5e2\n`);
put('huge_finite_ok.csv', `${H}2023-01-31,plover-works,${'9'.repeat(300)}\n2023-02-28,plover-works,${'9'.repeat(300)}\n`);

// --- dates
put('date_feb30.csv', `${H}${ok3}2023-02-30,kestrel-mills,13.00\n`);
put('date_month13.csv', `${H}${ok3}2023-13-01,kestrel-mills,13.00\n`);
put('date_year0.csv', `${H}0000-01-01,kestrel-mills,13.00\n`);
put('date_feb29_2023.csv', `${H}2023-02-29,kestrel-mills,13.00\n`);
put('date_feb29_1900.csv', `${H}1900-02-29,kestrel-mills,13.00\n`);
put('date_dayfirst.csv', `${H}31/01/2023,kestrel-mills,13.00\n`);
put('date_day00.csv', `${H}2023-01-00,kestrel-mills,13.00\n`);
put('leap_days_ok.csv', `${H}2000-02-29,plover-works,10\n2004-02-27,plover-works,11\n2024-02-29,plover-works,12\n`);

// --- headers and keys
put('duplicate_header.csv', 'date,asset,price,price\n2023-01-31,kestrel-mills,12.50,12.60\n');
put('duplicate_header_case.csv', 'Date,asset,price,DATE\n2023-01-31,kestrel-mills,12.50,2023-01-31\n');
put('empty_header_name.csv', 'date,,price\n2023-01-31,kestrel-mills,12.50\n');
put('duplicate_row.csv', `${H}${ok3}2023-01-31,kestrel-mills,12.60\n`);
put('empty_asset.csv', `${H}${ok3}2023-03-31,,13.00\n`);
// terminal escape sequences (ECMA-48 CSI: ESC [) in names and values
put('control_char_name.csv', `${H}2023-01-31,kestrel\u001b[2Jmills,12.50\n`);
put('control_char_header.csv', 'date,asset,price,note\u0007\n2023-01-31,kestrel-mills,12.50,x\n');
put('escape_in_price.csv', `${H}2023-01-31,kestrel-mills,\u001b[31m12.50\n`);
put('conflict_with_stored.csv', `${H}2020-02-28,alder-hollow,11.00\n`);

// --- wide layout
{
  const n = 9999;
  const names = Array.from({ length: n }, (_, i) => `w${String(i + 1).padStart(4, '0')}`);
  const row = (d, last) => `${d},${names.map((_, i) => (i === n - 1 ? last : String(10 + (i % 7)))).join(',')}\n`;
  put('wide_10000.csv', `date,${names.join(',')}\n${row('2023-01-31', '16')}${row('2023-02-28', '16')}${row('2023-03-31', 'x')}`);
}
put('wide_out_of_order.csv', 'date,plover-works,tern-yard\n2023-02-28,10,11\n2023-01-31,10,11\n');
put('wide_no_assets.csv', 'date\n2023-01-31\n');

// --- named series (factor kind unless the table says otherwise)
put('series_nan.csv', 'date,harbour_factor\n2023-01-31,0.01\n2023-02-28,NaN\n');
put('series_duplicate_date.csv', 'date,harbour_factor\n2023-01-31,0.01\n2023-01-31,0.02\n');
put('series_out_of_order.csv', 'date,harbour_factor\n2023-02-28,0.01\n2023-01-31,0.02\n');
put('series_rate_below_minus_one.csv', 'date,tbill\n2023-01-31,0.001\n2023-02-28,-1.5\n');
put('series_kind_clash.csv', 'date,gale_factor\n2023-03-31,0.02\n');

mkdirSync(here, { recursive: true });
for (const f of readdirSync(here)) if (f.endsWith('.csv') && !(f in files)) rmSync(path.join(here, f));
for (const [name, bytes] of Object.entries(files)) writeFileSync(path.join(here, name), bytes);
process.stdout.write(`wrote ${Object.keys(files).length} files to ${path.relative(process.cwd(), here) || '.'}\n`);
