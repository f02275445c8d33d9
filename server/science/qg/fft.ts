/**
 * Complex FFT of any length and the discrete sine transform (DST-I) built on it.
 *
 * The FFT is a mixed-radix Stockham autosort algorithm (radices 4, 2, 3 and a generic
 * small-prime butterfly), which needs no bit reversal and works for any length whose prime
 * factors are small; lengths with a large prime factor go through Bluestein's chirp-z
 * algorithm on a power-of-two FFT. Sources: Cooley and Tukey (1965); Stockham (1966);
 * Bluestein (1970); Van Loan, Computational Frameworks for the Fast Fourier Transform (1992).
 * Sign convention: forward X_k = sum_j x_j exp(-2 pi i j k / n), unnormalised.
 */

const MAX_DIRECT_PRIME = 13;

interface Stage {
  radix: number;
  /** current transform length n at this stage, and the stride s */
  n: number;
  stride: number;
  twRe: Float64Array;
  twIm: Float64Array;
}

function factorize(n: number): number[] {
  const factors: number[] = [];
  let rest = n;
  while (rest % 4 === 0) { factors.push(4); rest /= 4; }
  while (rest % 2 === 0) { factors.push(2); rest /= 2; }
  for (let p = 3; p * p <= rest; p += 2) {
    while (rest % p === 0) { factors.push(p); rest /= p; }
  }
  if (rest > 1) factors.push(rest);
  return factors;
}

/**
 * A reusable plan for the forward complex FFT of one length, applied to `batch` interleaved
 * sequences at once: element j of sequence r sits at j * batch + r. Batching is the Stockham
 * recursion started at stride `batch`, so every butterfly loop runs over the whole batch
 * (long, contiguous inner loops). Work buffers are held inside the plan.
 */
export class FftPlan {
  readonly n: number;
  readonly batch: number;
  private readonly stages: Stage[] = [];
  private readonly scratchRe: Float64Array;
  private readonly scratchIm: Float64Array;
  private readonly bluestein: BluesteinPlan | null = null;

  constructor(n: number, batch = 1) {
    if (!Number.isInteger(n) || n < 1) throw new RangeError(`FFT length must be a positive integer, got ${n}`);
    if (!Number.isInteger(batch) || batch < 1) throw new RangeError(`FFT batch must be a positive integer, got ${batch}`);
    this.n = n;
    this.batch = batch;
    const factors = factorize(n);
    if (factors.some((p) => p > MAX_DIRECT_PRIME)) {
      this.bluestein = new BluesteinPlan(n);
      this.scratchRe = new Float64Array(n);
      this.scratchIm = new Float64Array(n);
      return;
    }
    this.scratchRe = new Float64Array(n * batch);
    this.scratchIm = new Float64Array(n * batch);
    let len = n;
    let stride = batch;
    for (const radix of factors) {
      const m = len / radix;
      const twRe = new Float64Array(m * radix);
      const twIm = new Float64Array(m * radix);
      for (let q = 0; q < m; q++) {
        for (let u = 0; u < radix; u++) {
          const angle = (-2 * Math.PI * q * u) / len;
          twRe[q * radix + u] = Math.cos(angle);
          twIm[q * radix + u] = Math.sin(angle);
        }
      }
      this.stages.push({ radix, n: len, stride, twRe, twIm });
      len = m;
      stride *= radix;
    }
  }

  /** In-place forward transform of (re, im), each of length n * batch. */
  forward(re: Float64Array, im: Float64Array): void {
    if (this.bluestein) { this.forwardBluestein(re, im); return; }
    let xr = re, xi = im, yr = this.scratchRe, yi = this.scratchIm;
    for (const st of this.stages) {
      runStage(st, xr, xi, yr, yi);
      const tr = xr; xr = yr; yr = tr;
      const ti = xi; xi = yi; yi = ti;
    }
    if (xr !== re) { re.set(xr); im.set(xi); }
  }

  /** In-place inverse transform, normalised by 1/n. */
  inverse(re: Float64Array, im: Float64Array): void {
    const total = this.n * this.batch;
    for (let i = 0; i < total; i++) im[i] = -im[i];
    this.forward(re, im);
    const s = 1 / this.n;
    for (let i = 0; i < total; i++) { re[i] *= s; im[i] = -im[i] * s; }
  }

  private forwardBluestein(re: Float64Array, im: Float64Array): void {
    const { n, batch, scratchRe, scratchIm } = this;
    if (batch === 1) { this.bluestein!.forward(re, im); return; }
    for (let r = 0; r < batch; r++) {
      for (let j = 0; j < n; j++) { scratchRe[j] = re[j * batch + r]; scratchIm[j] = im[j * batch + r]; }
      this.bluestein!.forward(scratchRe, scratchIm);
      for (let j = 0; j < n; j++) { re[j * batch + r] = scratchRe[j]; im[j * batch + r] = scratchIm[j]; }
    }
  }
}

function runStage(st: Stage, xr: Float64Array, xi: Float64Array, yr: Float64Array, yi: Float64Array): void {
  if (st.radix === 4) radix4(st, xr, xi, yr, yi);
  else if (st.radix === 2) radix2(st, xr, xi, yr, yi);
  else if (st.radix === 3) radix3(st, xr, xi, yr, yi);
  else if (st.radix === 5) radix5(st, xr, xi, yr, yi);
  else radixGeneric(st, xr, xi, yr, yi);
}

// In every butterfly: input x[q + s*(pidx + r*m)], output y[q + s*(p*pidx + u)] times w_n^(pidx*u).
function radix2(st: Stage, xr: Float64Array, xi: Float64Array, yr: Float64Array, yi: Float64Array): void {
  const s = st.stride, m = st.n / 2, { twRe, twIm } = st;
  for (let p = 0; p < m; p++) {
    const wr = twRe[p * 2 + 1], wi = twIm[p * 2 + 1];
    const i0 = s * p, i1 = s * (p + m), o0 = s * 2 * p, o1 = o0 + s;
    for (let q = 0; q < s; q++) {
      const ar = xr[i0 + q], ai = xi[i0 + q], br = xr[i1 + q], bi = xi[i1 + q];
      yr[o0 + q] = ar + br; yi[o0 + q] = ai + bi;
      const dr = ar - br, di = ai - bi;
      yr[o1 + q] = dr * wr - di * wi; yi[o1 + q] = dr * wi + di * wr;
    }
  }
}

function radix4(st: Stage, xr: Float64Array, xi: Float64Array, yr: Float64Array, yi: Float64Array): void {
  const s = st.stride, m = st.n / 4, { twRe, twIm } = st;
  for (let p = 0; p < m; p++) {
    const w1r = twRe[p * 4 + 1], w1i = twIm[p * 4 + 1];
    const w2r = twRe[p * 4 + 2], w2i = twIm[p * 4 + 2];
    const w3r = twRe[p * 4 + 3], w3i = twIm[p * 4 + 3];
    const i0 = s * p, i1 = s * (p + m), i2 = s * (p + 2 * m), i3 = s * (p + 3 * m);
    const o0 = s * 4 * p, o1 = o0 + s, o2 = o1 + s, o3 = o2 + s;
    for (let q = 0; q < s; q++) {
      const a0r = xr[i0 + q], a0i = xi[i0 + q], a1r = xr[i1 + q], a1i = xi[i1 + q];
      const a2r = xr[i2 + q], a2i = xi[i2 + q], a3r = xr[i3 + q], a3i = xi[i3 + q];
      const s02r = a0r + a2r, s02i = a0i + a2i, d02r = a0r - a2r, d02i = a0i - a2i;
      const s13r = a1r + a3r, s13i = a1i + a3i, d13r = a1r - a3r, d13i = a1i - a3i;
      yr[o0 + q] = s02r + s13r; yi[o0 + q] = s02i + s13i;
      // b1 = d02 - i d13, b2 = s02 - s13, b3 = d02 + i d13
      const b1r = d02r + d13i, b1i = d02i - d13r;
      const b2r = s02r - s13r, b2i = s02i - s13i;
      const b3r = d02r - d13i, b3i = d02i + d13r;
      yr[o1 + q] = b1r * w1r - b1i * w1i; yi[o1 + q] = b1r * w1i + b1i * w1r;
      yr[o2 + q] = b2r * w2r - b2i * w2i; yi[o2 + q] = b2r * w2i + b2i * w2r;
      yr[o3 + q] = b3r * w3r - b3i * w3i; yi[o3 + q] = b3r * w3i + b3i * w3r;
    }
  }
}

const SIN60 = Math.sqrt(3) / 2;

function radix3(st: Stage, xr: Float64Array, xi: Float64Array, yr: Float64Array, yi: Float64Array): void {
  const s = st.stride, m = st.n / 3, { twRe, twIm } = st;
  for (let p = 0; p < m; p++) {
    const w1r = twRe[p * 3 + 1], w1i = twIm[p * 3 + 1];
    const w2r = twRe[p * 3 + 2], w2i = twIm[p * 3 + 2];
    const i0 = s * p, i1 = s * (p + m), i2 = s * (p + 2 * m);
    const o0 = s * 3 * p, o1 = o0 + s, o2 = o1 + s;
    for (let q = 0; q < s; q++) {
      const a0r = xr[i0 + q], a0i = xi[i0 + q], a1r = xr[i1 + q], a1i = xi[i1 + q];
      const a2r = xr[i2 + q], a2i = xi[i2 + q];
      const tr = a1r + a2r, ti = a1i + a2i, dr = a1r - a2r, di = a1i - a2i;
      yr[o0 + q] = a0r + tr; yi[o0 + q] = a0i + ti;
      const cr = a0r - 0.5 * tr, ci = a0i - 0.5 * ti;
      const b1r = cr + SIN60 * di, b1i = ci - SIN60 * dr;
      const b2r = cr - SIN60 * di, b2i = ci + SIN60 * dr;
      yr[o1 + q] = b1r * w1r - b1i * w1i; yi[o1 + q] = b1r * w1i + b1i * w1r;
      yr[o2 + q] = b2r * w2r - b2i * w2i; yi[o2 + q] = b2r * w2i + b2i * w2r;
    }
  }
}

const C1 = Math.cos((2 * Math.PI) / 5), C2 = Math.cos((4 * Math.PI) / 5);
const S1 = Math.sin((2 * Math.PI) / 5), S2 = Math.sin((4 * Math.PI) / 5);

function radix5(st: Stage, xr: Float64Array, xi: Float64Array, yr: Float64Array, yi: Float64Array): void {
  const s = st.stride, m = st.n / 5, { twRe, twIm } = st;
  for (let p = 0; p < m; p++) {
    const t = p * 5;
    const w1r = twRe[t + 1], w1i = twIm[t + 1], w2r = twRe[t + 2], w2i = twIm[t + 2];
    const w3r = twRe[t + 3], w3i = twIm[t + 3], w4r = twRe[t + 4], w4i = twIm[t + 4];
    const i0 = s * p, i1 = s * (p + m), i2 = s * (p + 2 * m), i3 = s * (p + 3 * m), i4 = s * (p + 4 * m);
    const o0 = s * 5 * p, o1 = o0 + s, o2 = o1 + s, o3 = o2 + s, o4 = o3 + s;
    for (let q = 0; q < s; q++) {
      const a0r = xr[i0 + q], a0i = xi[i0 + q];
      const a1r = xr[i1 + q], a1i = xi[i1 + q], a4r = xr[i4 + q], a4i = xi[i4 + q];
      const a2r = xr[i2 + q], a2i = xi[i2 + q], a3r = xr[i3 + q], a3i = xi[i3 + q];
      const t1r = a1r + a4r, t1i = a1i + a4i, d1r = a1r - a4r, d1i = a1i - a4i;
      const t2r = a2r + a3r, t2i = a2i + a3i, d2r = a2r - a3r, d2i = a2i - a3i;
      yr[o0 + q] = a0r + t1r + t2r; yi[o0 + q] = a0i + t1i + t2i;
      const e1r = a0r + C1 * t1r + C2 * t2r, e1i = a0i + C1 * t1i + C2 * t2i;
      const e2r = a0r + C2 * t1r + C1 * t2r, e2i = a0i + C2 * t1i + C1 * t2i;
      const xr1 = S1 * d1r + S2 * d2r, xi1 = S1 * d1i + S2 * d2i;
      const xr2 = S2 * d1r - S1 * d2r, xi2 = S2 * d1i - S1 * d2i;
      const b1r = e1r + xi1, b1i = e1i - xr1, b4r = e1r - xi1, b4i = e1i + xr1;
      const b2r = e2r + xi2, b2i = e2i - xr2, b3r = e2r - xi2, b3i = e2i + xr2;
      yr[o1 + q] = b1r * w1r - b1i * w1i; yi[o1 + q] = b1r * w1i + b1i * w1r;
      yr[o2 + q] = b2r * w2r - b2i * w2i; yi[o2 + q] = b2r * w2i + b2i * w2r;
      yr[o3 + q] = b3r * w3r - b3i * w3i; yi[o3 + q] = b3r * w3i + b3i * w3r;
      yr[o4 + q] = b4r * w4r - b4i * w4i; yi[o4 + q] = b4r * w4i + b4i * w4r;
    }
  }
}

function radixGeneric(st: Stage, xr: Float64Array, xi: Float64Array, yr: Float64Array, yi: Float64Array): void {
  const radix = st.radix, s = st.stride, m = st.n / radix, { twRe, twIm } = st;
  const rootRe = new Float64Array(radix), rootIm = new Float64Array(radix);
  for (let r = 0; r < radix; r++) {
    rootRe[r] = Math.cos((-2 * Math.PI * r) / radix);
    rootIm[r] = Math.sin((-2 * Math.PI * r) / radix);
  }
  const ar = new Float64Array(radix), ai = new Float64Array(radix);
  for (let p = 0; p < m; p++) {
    for (let q = 0; q < s; q++) {
      for (let r = 0; r < radix; r++) { ar[r] = xr[q + s * (p + r * m)]; ai[r] = xi[q + s * (p + r * m)]; }
      for (let u = 0; u < radix; u++) {
        let br = 0, bi = 0;
        for (let r = 0; r < radix; r++) {
          const e = (r * u) % radix;
          br += ar[r] * rootRe[e] - ai[r] * rootIm[e];
          bi += ar[r] * rootIm[e] + ai[r] * rootRe[e];
        }
        const wr = twRe[p * radix + u], wi = twIm[p * radix + u];
        const o = q + s * (radix * p + u);
        yr[o] = br * wr - bi * wi; yi[o] = br * wi + bi * wr;
      }
    }
  }
}

/** Bluestein's chirp-z: a length-n DFT as a circular convolution of power-of-two length. */
class BluesteinPlan {
  private readonly n: number;
  private readonly inner: FftPlan;
  private readonly chirpRe: Float64Array;
  private readonly chirpIm: Float64Array;
  private readonly kernelRe: Float64Array;
  private readonly kernelIm: Float64Array;
  private readonly bufRe: Float64Array;
  private readonly bufIm: Float64Array;

  constructor(n: number) {
    this.n = n;
    let size = 1;
    while (size < 2 * n - 1) size *= 2;
    this.inner = new FftPlan(size);
    this.chirpRe = new Float64Array(n);
    this.chirpIm = new Float64Array(n);
    for (let k = 0; k < n; k++) {
      // k^2 mod 2n keeps the angle argument small and exact for large k
      const angle = (Math.PI * ((k * k) % (2 * n))) / n;
      this.chirpRe[k] = Math.cos(angle);
      this.chirpIm[k] = Math.sin(angle);
    }
    this.kernelRe = new Float64Array(size);
    this.kernelIm = new Float64Array(size);
    for (let k = 0; k < n; k++) {
      this.kernelRe[k] = this.chirpRe[k]; this.kernelIm[k] = this.chirpIm[k];
      if (k > 0) { this.kernelRe[size - k] = this.chirpRe[k]; this.kernelIm[size - k] = this.chirpIm[k]; }
    }
    this.inner.forward(this.kernelRe, this.kernelIm);
    this.bufRe = new Float64Array(size);
    this.bufIm = new Float64Array(size);
  }

  forward(re: Float64Array, im: Float64Array): void {
    const { n, chirpRe, chirpIm, bufRe, bufIm } = this;
    bufRe.fill(0); bufIm.fill(0);
    for (let k = 0; k < n; k++) {
      // x_k * conj(chirp_k)
      bufRe[k] = re[k] * chirpRe[k] + im[k] * chirpIm[k];
      bufIm[k] = im[k] * chirpRe[k] - re[k] * chirpIm[k];
    }
    this.inner.forward(bufRe, bufIm);
    for (let k = 0; k < bufRe.length; k++) {
      const r = bufRe[k] * this.kernelRe[k] - bufIm[k] * this.kernelIm[k];
      const i = bufRe[k] * this.kernelIm[k] + bufIm[k] * this.kernelRe[k];
      bufRe[k] = r; bufIm[k] = i;
    }
    this.inner.inverse(bufRe, bufIm);
    for (let k = 0; k < n; k++) {
      re[k] = bufRe[k] * chirpRe[k] + bufIm[k] * chirpIm[k];
      im[k] = bufIm[k] * chirpRe[k] - bufRe[k] * chirpIm[k];
    }
  }
}

/**
 * DST-I of length n: X_s = sum_{i=1..n} x_i sin(pi s i / (n + 1)), s = 1..n. Applying it twice
 * gives (n + 1) / 2 times the input, so the inverse is the same transform scaled by 2 / (n + 1).
 * Algorithm: the pre- and post-processing of Press et al., Numerical Recipes (2nd ed.),
 * section 12.3 (routine sinft), which turns a DST-I into a real FFT of length N = n + 1; two
 * real rows share one complex FFT (one in the real part, one in the imaginary part), and all
 * row pairs of a block go through one batched FFT.
 */
export class DstI {
  readonly n: number;
  readonly rows: number;
  private readonly pairs: number;
  private readonly plan: FftPlan;
  private readonly re: Float64Array;
  private readonly im: Float64Array;
  private readonly sines: Float64Array;

  /** A transform of `rows` rows of length n at a time. */
  constructor(n: number, rows = 1) {
    if (n < 1) throw new RangeError(`DST-I length must be at least 1, got ${n}`);
    this.n = n;
    this.rows = rows;
    this.pairs = Math.ceil(rows / 2);
    const big = n + 1;
    this.plan = new FftPlan(big, this.pairs);
    this.re = new Float64Array(big * this.pairs);
    this.im = new Float64Array(big * this.pairs);
    this.sines = new Float64Array(big);
    for (let j = 0; j < big; j++) this.sines[j] = Math.sin((Math.PI * j) / big);
  }

  /** Transforms the block of `rows` contiguous rows starting at data[offset], in place, times `scale`. */
  transformRows(data: Float64Array, offset: number, scale = 1): void {
    const { n, rows, pairs: B, re, im, sines } = this;
    const big = n + 1;
    for (let r = 0; r < B; r++) {
      const a = offset + r * n, hasB = r + B < rows, b = offset + (r + B) * n;
      re[r] = 0; im[r] = 0;
      for (let j = 1; 2 * j <= big; j++) {
        const s = sines[j], jj = big - j;
        const aj = data[a + j - 1], ajj = data[a + jj - 1];
        const bj = hasB ? data[b + j - 1] : 0, bjj = hasB ? data[b + jj - 1] : 0;
        const a1 = s * (aj + ajj), a2 = 0.5 * (aj - ajj);
        const b1 = s * (bj + bjj), b2 = 0.5 * (bj - bjj);
        re[j * B + r] = a1 + a2; re[jj * B + r] = a1 - a2;
        im[j * B + r] = b1 + b2; im[jj * B + r] = b1 - b2;
      }
    }
    this.plan.forward(re, im);
    for (let r = 0; r < B; r++) {
      const a = offset + r * n, hasB = r + B < rows, b = offset + (r + B) * n;
      // F_1 = R_0 / 2, F_{2k} = I_k, F_{2k+1} = F_{2k-1} + R_k (R, I: cosine and sine sums)
      let oddA = 0, oddB = 0;
      for (let k = 0; 2 * k <= n; k++) {
        const kk = k === 0 ? 0 : big - k;
        const zr = re[k * B + r], zi = im[k * B + r], wr = re[kk * B + r], wi = im[kk * B + r];
        const rA = 0.5 * (zr + wr), iA = -0.5 * (zi - wi);
        const rB = 0.5 * (zi + wi), iB = 0.5 * (zr - wr);
        if (k > 0) {
          data[a + 2 * k - 1] = scale * iA;
          if (hasB) data[b + 2 * k - 1] = scale * iB;
        }
        if (2 * k + 1 <= n) {
          oddA = k === 0 ? 0.5 * rA : oddA + rA;
          oddB = k === 0 ? 0.5 * rB : oddB + rB;
          data[a + 2 * k] = scale * oddA;
          if (hasB) data[b + 2 * k] = scale * oddB;
        }
      }
    }
  }
}
