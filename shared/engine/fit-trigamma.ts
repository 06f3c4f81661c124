/**
 * The trigamma function ψ′(z) = Σ_{n≥0} 1/(n + z)² for complex z with Re z > 0, the kernel
 * of a thermally broadened Lorentzian (fit-lineshapes.ts).
 *
 * Method: the recurrence ψ′(z) = ψ′(z + 1) + 1/z² (Abramowitz & Stegun 6.4.6) until
 * |z| ≥ 12, then the asymptotic series ψ′(z) ≈ 1/z + 1/(2z²) + Σ_k B_2k / z^(2k+1)
 * (A&S 6.4.12) to z⁻¹³, whose error there is below 1e-15 relative. Cost: at most 12 complex
 * divisions plus a fixed series. Writes (re, im) into out[0], out[1]; no allocation.
 */
export function trigamma(re: number, im: number, out: Float64Array): void {
  let sRe = 0;
  let sIm = 0;
  let x = re;
  const y = im;
  while (x * x + y * y < 144) {
    // 1/z² = conj(z)² / |z|⁴
    const d = x * x + y * y;
    const d2 = d * d;
    sRe += (x * x - y * y) / d2;
    sIm += (-2 * x * y) / d2;
    x += 1;
  }
  // w = 1/z
  const d = x * x + y * y;
  const wRe = x / d;
  const wIm = -y / d;
  const w2Re = wRe * wRe - wIm * wIm;
  const w2Im = 2 * wRe * wIm;
  // Bernoulli numbers B2..B12: 1/6, -1/30, 1/42, -1/30, 5/66, -691/2730
  const b = [1 / 6, -1 / 30, 1 / 42, -1 / 30, 5 / 66, -691 / 2730];
  // Horner in w² for Σ B_2k w^(2k) (k = 1..6), then times w.
  let pRe = 0;
  let pIm = 0;
  for (let k = b.length - 1; k >= 0; k--) {
    const tRe = (pRe + b[k]) * w2Re - pIm * w2Im;
    const tIm = (pRe + b[k]) * w2Im + pIm * w2Re;
    pRe = tRe;
    pIm = tIm;
  }
  // ψ′ ≈ w + w²/2 + w·P(w²)
  const aRe = wRe + 0.5 * w2Re + (wRe * pRe - wIm * pIm);
  const aIm = wIm + 0.5 * w2Im + (wRe * pIm + wIm * pRe);
  out[0] = sRe + aRe;
  out[1] = sIm + aIm;
}
