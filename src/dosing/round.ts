/**
 * Presentation rounding of a JSON number, the same rule as `roundSig` of src/core/decimal.ts
 * (significant figures, round half to even, on the number's shortest decimal representation —
 * the digits `String(x)` prints, which is also what `new Dec(x)` reads), without building a
 * Decimal: it works on the digit string. tests/dosing/round.test.ts checks it against
 * `roundSig(new Dec(x))` over random numbers. Used for the many secondary figures of a dose
 * answer, so the hot path pays for Decimal only where the arithmetic itself is reported.
 */

/** Digits and decimal exponent of the shortest representation: x = 0.d1d2d3… × 10^exp. */
function digitsOf(x: number): { digits: string; exp: number } {
  const s = String(x);
  let mant = s;
  let e = 0;
  const ei = s.indexOf('e');
  if (ei >= 0) {
    mant = s.slice(0, ei);
    e = Number(s.slice(ei + 1));
  }
  const dot = mant.indexOf('.');
  let intPart = dot >= 0 ? mant.slice(0, dot) : mant;
  const frac = dot >= 0 ? mant.slice(dot + 1) : '';
  let all = intPart + frac;
  let exp = intPart.length + e;
  // strip leading zeros
  let i = 0;
  while (i < all.length - 1 && all[i] === '0') i++;
  exp -= i;
  all = all.slice(i);
  // strip trailing zeros
  let j = all.length;
  while (j > 1 && all[j - 1] === '0') j--;
  all = all.slice(0, j);
  intPart = '';
  return { digits: all, exp };
}

/**
 * The text of 0.digits × 10^exp as roundSig prints it: decimal.js notation with toExpNeg −12 and
 * toExpPos 21 (the project's Dec configuration), the digits padded with the zeros that are
 * significant up to `sig` figures.
 */
function format(digitsIn: string, exp: number, negative: boolean, sig: number): string {
  const digits = digitsIn.length < sig && (exp < sig || exp - 1 <= -12 || exp - 1 >= 21) ? digitsIn.padEnd(sig, '0') : digitsIn;
  // value = 0.digits × 10^exp ; decimal exponent of the first digit e = exp - 1
  const e = exp - 1;
  let out: string;
  if (e <= -12 || e >= 21) {
    out = digits[0]! + (digits.length > 1 ? '.' + digits.slice(1) : '') + 'e' + (e < 0 ? '-' : '+') + String(Math.abs(e));
  } else if (exp <= 0) {
    out = '0.' + '0'.repeat(-exp) + digits;
  } else if (exp >= digits.length) {
    out = digits + '0'.repeat(exp - digits.length);
  } else {
    out = digits.slice(0, exp) + '.' + digits.slice(exp);
  }
  return negative ? '-' + out : out;
}

/** Round a finite number to `sig` significant figures, half to even; returns the decimal text. */
export function roundSigNumber(x: number, sig = 3): string {
  if (!Number.isFinite(x)) return String(x);
  if (x === 0) return '0';
  const negative = x < 0;
  const { digits, exp } = digitsOf(Math.abs(x));
  if (digits.length <= sig) return format(digits, exp, negative, sig);
  let head = digits.slice(0, sig);
  const next = digits.charCodeAt(sig) - 48;
  const restNonZero = digits.length > sig + 1; // trailing zeros were stripped
  let up = false;
  if (next > 5) up = true;
  else if (next === 5) up = restNonZero || (head.charCodeAt(sig - 1) - 48) % 2 === 1;
  let e = exp;
  if (up) {
    // increment the head as a decimal string
    const arr = head.split('');
    let k = arr.length - 1;
    while (k >= 0) {
      if (arr[k] === '9') {
        arr[k] = '0';
        k--;
      } else {
        arr[k] = String.fromCharCode(arr[k]!.charCodeAt(0) + 1);
        break;
      }
    }
    head = arr.join('');
    if (k < 0) {
      head = '1' + head.slice(0, sig - 1);
      e += 1;
    }
  }
  let j = head.length;
  while (j > 1 && head[j - 1] === '0') j--;
  return format(head.slice(0, j), e, negative, sig);
}
