import path from 'node:path';

/**
 * An output named for one input: `out.svg` as given for one input; `out-<input name>.svg` for each of several
 * (`defaultExt` when the name given has no extension).
 */
export function perInputName(target: string, input: string, several: boolean, defaultExt = ''): string {
  if (!several) return target;
  const ext = path.extname(target) || defaultExt;
  return path.join(path.dirname(target), `${path.basename(target, ext)}-${path.basename(input, path.extname(input))}${ext}`);
}
