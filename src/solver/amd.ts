/**
 * Approximate minimum degree ordering of a symmetric sparse matrix, given as
 * its adjacency graph: `ap`/`ai` in compressed-column form, the pattern of
 * A + Aᵀ without the diagonal and without repeated entries. Returns `perm`:
 * perm[k] is the vertex eliminated k-th.
 *
 * The quotient graph of Amestoy, Davis, Duff, "An approximate minimum degree
 * ordering algorithm", SIAM J. Matrix Anal. Appl. 17(4), 1996: elements absorb
 * eliminated neighbourhoods, external degrees are bounded instead of computed
 * exactly, indistinguishable variables merge into supervariables, variables
 * adjacent only to the pivot are eliminated with it (mass elimination), and
 * elements wholly inside the new element are absorbed (aggressive absorption).
 */

const VARIABLE = 0;
const ELEMENT = 1;
const DEAD = 2;

/**
 * Approximate minimum degree ordering. Dense vertices (degree above
 * max(16, 10·√n), as AMD implementations commonly treat them) are taken out
 * of the graph and ordered last: they would otherwise make every elimination
 * scan their long lists.
 */
export function amd(n: number, ap: Int32Array, ai: Int32Array): Int32Array {
  const limit = Math.max(16, 10 * Math.sqrt(n));
  let dense = 0;
  for (let v = 0; v < n; v++) if (ap[v + 1] - ap[v] > limit) dense++;
  if (dense === 0) return amdQuotient(n, ap, ai);
  // Order the sparse part on its own, then append the dense vertices.
  const local = new Int32Array(n).fill(-1);
  const global = new Int32Array(n - dense);
  let m = 0;
  for (let v = 0; v < n; v++) {
    if (ap[v + 1] - ap[v] > limit) continue;
    local[v] = m;
    global[m++] = v;
  }
  const sp = new Int32Array(m + 1);
  let nz = 0;
  for (let k = 0; k < m; k++) {
    const v = global[k];
    for (let q = ap[v]; q < ap[v + 1]; q++) if (local[ai[q]] >= 0) nz++;
    sp[k + 1] = nz;
  }
  const si = new Int32Array(nz);
  nz = 0;
  for (let k = 0; k < m; k++) {
    const v = global[k];
    for (let q = ap[v]; q < ap[v + 1]; q++) {
      const u = local[ai[q]];
      if (u >= 0) si[nz++] = u;
    }
  }
  const sub = amdQuotient(m, sp, si);
  const perm = new Int32Array(n);
  for (let k = 0; k < m; k++) perm[k] = global[sub[k]];
  let k = m;
  for (let v = 0; v < n; v++) if (local[v] < 0) perm[k++] = v;
  return perm;
}

/** Approximate minimum degree on the quotient graph (no dense-vertex handling). */
function amdQuotient(n: number, ap: Int32Array, ai: Int32Array): Int32Array {
  const perm = new Int32Array(n);
  if (n === 0) return perm;
  const nnz = ap[n];
  let iw = new Int32Array(Math.max(nnz + 2 * n, 16));
  iw.set(ai.subarray(0, nnz));
  let pfree = nnz;
  const pe = new Int32Array(n);
  const len = new Int32Array(n);
  const elen = new Int32Array(n);
  const nv = new Int32Array(n);
  const degree = new Int32Array(n);
  const status = new Uint8Array(n);
  const head = new Int32Array(n + 1).fill(-1);
  const next = new Int32Array(n);
  const last = new Int32Array(n);
  const w = new Float64Array(n);
  const hhead = new Int32Array(n).fill(-1);
  const hnext = new Int32Array(n);
  const hashOf = new Int32Array(n);
  const flag = new Int32Array(n);
  const memNext = new Int32Array(n).fill(-1);
  const memTail = new Int32Array(n);
  const tmp = new Int32Array(n + 1);
  let stamp = 0;
  let wflg = 1;
  let nel = 0;
  let out = 0;

  const ensure = (extra: number): void => {
    if (pfree + extra <= iw.length) return;
    const grown = new Int32Array(Math.max(2 * iw.length, pfree + extra));
    grown.set(iw.subarray(0, pfree));
    iw = grown;
  };

  for (let i = 0; i < n; i++) {
    pe[i] = ap[i];
    len[i] = ap[i + 1] - ap[i];
    nv[i] = 1;
    degree[i] = len[i];
    memTail[i] = i;
    if (len[i] === 0) {
      // An isolated vertex costs nothing: eliminate it first.
      status[i] = DEAD;
      nv[i] = 0;
      perm[out++] = i;
      nel++;
      continue;
    }
    const d = degree[i];
    next[i] = head[d];
    last[i] = -1;
    if (head[d] !== -1) last[head[d]] = i;
    head[d] = i;
  }

  let mindeg = 0;
  while (nel < n) {
    while (head[mindeg] === -1) mindeg++;
    const p = head[mindeg];
    head[mindeg] = next[p];
    if (next[p] !== -1) last[next[p]] = -1;
    const nvp = nv[p];
    nel += nvp;

    // L_p = (A_p ∪ ⋃_{e ∈ E_p} L_e) \ {p}, principal variables only; E_p is absorbed into p.
    let bound = len[p];
    const pp = pe[p];
    for (let t = 0; t < elen[p]; t++) {
      const e = iw[pp + t];
      if (status[e] === ELEMENT) bound += len[e];
    }
    ensure(bound);
    const start = pfree;
    nv[p] = -nvp;
    let degme = 0;
    for (let t = 0; t < len[p]; t++) {
      const isElement = t < elen[p];
      const v = iw[pp + t];
      if (isElement) {
        if (status[v] !== ELEMENT) continue;
        const ev = pe[v];
        for (let q = ev; q < ev + len[v]; q++) {
          const i = iw[q];
          const nvi = nv[i];
          if (nvi <= 0) continue;
          degme += nvi;
          nv[i] = -nvi;
          iw[pfree++] = i;
          // Remove i from its degree list.
          if (last[i] !== -1) next[last[i]] = next[i];
          else head[degree[i]] = next[i];
          if (next[i] !== -1) last[next[i]] = last[i];
        }
        status[v] = DEAD;
        pe[v] = -1;
      } else {
        const i = v;
        const nvi = nv[i];
        if (nvi <= 0) continue;
        degme += nvi;
        nv[i] = -nvi;
        iw[pfree++] = i;
        if (last[i] !== -1) next[last[i]] = next[i];
        else head[degree[i]] = next[i];
        if (next[i] !== -1) last[next[i]] = last[i];
      }
    }
    const end = pfree;
    status[p] = ELEMENT;
    pe[p] = start;
    len[p] = end - start;
    elen[p] = 0;

    // w[e] - wflg = |L_e \ L_p| (weighted) for every element e adjacent to L_p.
    for (let q = start; q < end; q++) {
      const i = iw[q];
      const nvi = -nv[i];
      const pi = pe[i];
      for (let t = 0; t < elen[i]; t++) {
        const e = iw[pi + t];
        if (status[e] !== ELEMENT) continue;
        const we = w[e];
        w[e] = we >= wflg ? we - nvi : degree[e] + wflg - nvi;
      }
    }

    // New lists and degree bounds for each i in L_p.
    let relocated = false;
    for (let q = start; q < end; q++) {
      const i = iw[q];
      const nvi = -nv[i];
      const pi = pe[i];
      let ntmp = 0;
      tmp[ntmp++] = p;
      let hash = p;
      let deg = 0;
      for (let t = 0; t < elen[i]; t++) {
        const e = iw[pi + t];
        if (status[e] !== ELEMENT) continue;
        const dext = w[e] - wflg;
        if (dext > 0) {
          deg += dext;
          tmp[ntmp++] = e;
          hash += e;
        } else {
          // L_e ⊆ L_p: aggressive absorption into p.
          status[e] = DEAD;
          pe[e] = -1;
        }
      }
      const newElen = ntmp;
      for (let t = elen[i]; t < len[i]; t++) {
        const j = iw[pi + t];
        const nvj = nv[j];
        if (nvj <= 0 || status[j] !== VARIABLE) continue;
        deg += nvj;
        tmp[ntmp++] = j;
        hash += j;
      }
      if (deg === 0) {
        // Adjacent only to p: mass elimination together with p.
        status[i] = DEAD;
        pe[i] = -1;
        nv[i] = 0;
        nel += nvi;
        degme -= nvi;
        memNext[memTail[p]] = i;
        memTail[p] = memTail[i];
        continue;
      }
      degree[i] = Math.min(degree[i], deg);
      if (ntmp <= len[i]) {
        for (let t = 0; t < ntmp; t++) iw[pi + t] = tmp[t];
      } else {
        ensure(ntmp);
        pe[i] = pfree;
        for (let t = 0; t < ntmp; t++) iw[pfree + t] = tmp[t];
        pfree += ntmp;
        relocated = true;
      }
      len[i] = ntmp;
      elen[i] = newElen;
      const h = hash % n;
      hashOf[i] = h;
      hnext[i] = hhead[h];
      hhead[h] = i;
    }

    // Supervariables: variables of L_p with identical lists merge.
    for (let q = start; q < end; q++) {
      const i = iw[q];
      if (nv[i] >= 0) continue;
      const h = hashOf[i];
      let a = hhead[h];
      if (a === -1) continue;
      hhead[h] = -1;
      for (; a !== -1; a = hnext[a]) {
        if (nv[a] === 0) continue;
        stamp++;
        const pa = pe[a];
        for (let t = 0; t < len[a]; t++) flag[iw[pa + t]] = stamp;
        for (let b = hnext[a]; b !== -1; b = hnext[b]) {
          if (nv[b] === 0 || len[b] !== len[a] || elen[b] !== elen[a]) continue;
          const pb = pe[b];
          let same = true;
          for (let t = 0; t < len[b]; t++) {
            if (flag[iw[pb + t]] !== stamp) {
              same = false;
              break;
            }
          }
          if (!same) continue;
          nv[a] += nv[b];
          nv[b] = 0;
          status[b] = DEAD;
          pe[b] = -1;
          memNext[memTail[a]] = b;
          memTail[a] = memTail[b];
        }
      }
    }

    // Final degrees, back into the degree lists; compact L_p.
    let np = start;
    for (let q = start; q < end; q++) {
      const i = iw[q];
      const nvi = -nv[i];
      if (nvi <= 0) continue;
      nv[i] = nvi;
      let d = degree[i] + degme - nvi;
      const cap = n - nel - nvi;
      if (d > cap) d = cap;
      if (d < 0) d = 0;
      degree[i] = d;
      next[i] = head[d];
      last[i] = -1;
      if (head[d] !== -1) last[head[d]] = i;
      head[d] = i;
      if (d < mindeg) mindeg = d;
      iw[np++] = i;
    }
    len[p] = np - start;
    degree[p] = degme;
    nv[p] = nvp;
    if (!relocated) pfree = np;
    wflg += n + 1;

    for (let v = p; v !== -1; v = memNext[v]) perm[out++] = v;
  }
  return perm;
}
