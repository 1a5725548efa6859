/**
 * The import pipeline's messages and hints name the command line's options
 * ("pass --units percent"); the app's import panel has fields instead. panelWording says the
 * same in the panel's words, for the preview, the import's errors and its warnings.
 */
const RULES: [RegExp, string][] = [
  // a verb before an option becomes "choose"
  [/\b(pass|use) (?=--)/g, 'choose '],
  [/--units percent --replace/g, '"values are in percent" and "replace what is stored" ticked'],
  [/--units decimal --replace/g, '"values are in percent" unticked and "replace what is stored" ticked'],
  [/--units percent/g, '"values are in percent" ticked'],
  [/--units decimal/g, '"values are in percent" unticked'],
  [/--units\b/g, '"values are in percent"'],
  [/--missing ""/g, 'no missing-value codes'],
  [/--missing "([^"]*)"/g, 'missing-value codes $1'],
  [/--missing ([^\s;)]+)/g, 'missing-value codes $1'],
  [/--missing\b/g, 'missing-value codes'],
  [/--date-format ([A-Z][A-Za-z/.-]*)/g, 'dates $1'],
  [/--date-format\b/g, 'the dates field'],
  [/--decimal comma/g, 'decimal mark comma'],
  [/--delimiter (\w+)/g, 'delimiter $1'],
  [/--layout (\w+)/g, 'layout $1'],
  [/--kind\/--units\/--rf-form options/g, 'holds, percent and quoted-as fields'],
  [/--kind riskfree/g, 'holds: risk-free'],
  [/--form\b/g, '"each return is"'],
  [/--rf-form\b/g, '"quoted as"'],
  [/, or take it out first: (`deflator import remove [^`]*`(, )?)+/g, ''],
  [/with --replace\b/g, 'with "replace what is stored" ticked'],
  [/--replace\b/g, '"replace what is stored"'],
];

export function panelWording(text: string): string {
  let out = text;
  for (const [re, to] of RULES) out = out.replace(re, to);
  return out;
}
