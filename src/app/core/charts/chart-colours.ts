/** Chart colours taken from the theme's --mat-sys-* tokens, so charts follow the one theme. */
export interface ChartColours {
  primary: string;
  tertiary: string;
  error: string;
  secondary: string;
  outline: string;
  outlineVariant: string;
  onSurface: string;
  onSurfaceVariant: string;
  surface: string;
}

// Fallbacks are the theme's light-mode values, for specs (jsdom computes no custom properties).
const fallback: ChartColours = {
  primary: '#136873',
  tertiary: '#8f4f00',
  error: '#ba1a1a',
  secondary: '#4a6367',
  outline: '#6f797a',
  outlineVariant: '#bfc8ca',
  onSurface: '#191c1d',
  onSurfaceVariant: '#3f484a',
  surface: '#f8fafa',
};

export function chartColours(element: Element = document.documentElement): ChartColours {
  const style = getComputedStyle(element);
  const read = (name: string, otherwise: string) => style.getPropertyValue(`--mat-sys-${name}`).trim() || otherwise;
  return {
    primary: read('primary', fallback.primary),
    tertiary: read('tertiary', fallback.tertiary),
    error: read('error', fallback.error),
    secondary: read('secondary', fallback.secondary),
    outline: read('outline', fallback.outline),
    outlineVariant: read('outline-variant', fallback.outlineVariant),
    onSurface: read('on-surface', fallback.onSurface),
    onSurfaceVariant: read('on-surface-variant', fallback.onSurfaceVariant),
    surface: read('surface', fallback.surface),
  };
}
