// Terminal colour, on only for a terminal; NO_COLOR and FORCE_COLOR respected
// (no-color.org; FORCE_COLOR as Node's own util.styleText reads it).

export interface Paint {
  red(s: string): string;
  yellow(s: string): string;
  blue(s: string): string;
  dim(s: string): string;
  bold(s: string): string;
  green(s: string): string;
}

export function useColor(env: NodeJS.ProcessEnv, isTTY: boolean): boolean {
  if (env.FORCE_COLOR !== undefined && env.FORCE_COLOR !== '0' && env.FORCE_COLOR !== 'false') return true;
  if (env.NO_COLOR !== undefined && env.NO_COLOR !== '') return false;
  if (env.FORCE_COLOR === '0' || env.FORCE_COLOR === 'false') return false;
  return isTTY && env.TERM !== 'dumb';
}

const wrap = (open: number, close: number) => (s: string) => `\u001b[${open}m${s}\u001b[${close}m`;

export function paint(color: boolean): Paint {
  if (!color) {
    const id = (s: string) => s;
    return { red: id, yellow: id, blue: id, dim: id, bold: id, green: id };
  }
  return { red: wrap(31, 39), yellow: wrap(33, 39), blue: wrap(34, 39), dim: wrap(2, 22), bold: wrap(1, 22), green: wrap(32, 39) };
}
