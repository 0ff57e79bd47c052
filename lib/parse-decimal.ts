/**
 * The one reader of a decimal number typed by a person or read from a cell. A phone in most of Europe
 * offers a decimal comma, so "0,25" and "0.25" are the same number; spaces around it are ignored, a
 * leading minus is kept. Blank text is null (nothing typed); anything else that is not one plain
 * decimal is NaN ("1,2,3", "-", "1.2.3", "1e3", "0x10", "Infinity"), so a caller checks one
 * Number.isFinite and shows its own message. ESLint keeps decimal-comma handling to this module.
 */
export function parseDecimal(text: string): number | null {
  const s = text.trim();
  if (s === "") return null;
  if (!/^-?(\d+([.,]\d*)?|[.,]\d+)$/.test(s)) return Number.NaN;
  return Number(s.replace(",", "."));
}
