/** The export formats of a recorded run (CLI `deflator export`, the app's export call). */
export const EXPORT_FORMATS = ['csv', 'xlsx', 'latex', 'html', 'pdf'] as const;
export type ExportFormat = (typeof EXPORT_FORMATS)[number];

export const EXPORT_EXTENSIONS: Record<ExportFormat, string> = { csv: 'csv', xlsx: 'xlsx', latex: 'tex', html: 'html', pdf: 'pdf' };

export const EXPORT_MIME: Record<ExportFormat, string> = {
  csv: 'text/csv',
  xlsx: 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet',
  latex: 'application/x-tex',
  html: 'text/html',
  pdf: 'application/pdf',
};
