/** Formatting of the working (formula with numbers substituted); a port of working.py. */

function roundTo(value: number, decimals: number): number {
  if (decimals >= 0) return Number(value.toFixed(Math.min(decimals, 100)));
  const factor = 10 ** -decimals;
  return Math.round(value / factor) * factor;
}

/** A number to `figures` significant figures in plain notation, trailing zeros dropped. */
export function num(value: number, figures = 4): string {
  if (Number.isNaN(value)) return "undefined";
  if (!Number.isFinite(value)) return value > 0 ? "infinite" : "-infinite";
  if (value === 0) return "0";
  const exponent = Math.floor(Math.log10(Math.abs(value)));
  if (exponent >= 9 || exponent < -6) {
    const [rawHead = "", tail = "0"] = value.toExponential(figures - 1).split("e");
    const head = rawHead.includes(".") ? rawHead.replace(/0+$/, "").replace(/\.$/, "") : rawHead;
    return `${head}e${parseInt(tail, 10)}`;
  }
  let decimals = figures - 1 - exponent;
  const rounded = roundTo(value, decimals);
  if (rounded !== 0 && Math.floor(Math.log10(Math.abs(rounded))) > exponent) decimals -= 1;
  if (decimals <= 0) return rounded.toFixed(0);
  const text = rounded.toFixed(decimals);
  return text.includes(".") ? text.replace(/0+$/, "").replace(/\.$/, "") : text;
}

/** A relative margin as a signed percentage, e.g. 0.254 -> '+25.4 %'. */
export function pct(fraction: number): string {
  if (!Number.isFinite(fraction)) return num(fraction);
  return `${fraction >= 0 ? "+" : "-"}${num(Math.abs(fraction) * 100, 3)} %`;
}
