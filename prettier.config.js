// Prettier's settings, chosen to match the code as it was written (DEVELOPERS.md, "Lint and format").
/** @type {import('prettier').Config} */
export default {
  // 99 % of the lines already fit in 160 columns; 120 or 140 would rewrap thousands more.
  printWidth: 160,
  singleQuote: true,
  trailingComma: 'all',
  // Angular control flow (@if, @for) needs the Angular parser: the plain HTML one breaks it.
  overrides: [{ files: '*.html', options: { parser: 'angular' } }],
};
