;; Oddsmith's WebAssembly kernels: the two Gram-matrix sums that dominate the fits, on row blocks
;; held in this module's memory, with 128-bit SIMD (two doubles per instruction, two rows at once).
;; The JavaScript versions in linalg.ts (accumulateBlockGram) and blockAccumulate.ts
;; (accumulateWeightedGrams) compute the same sums and remain the fallback; wasmKernels.ts loads
;; this module and test/unit/engine/wasmKernels.test.ts checks both against each other.
;; Addresses and strides are in bytes; row counts must be even (callers pad with a zero row).
;; Each sum is accumulated in two lanes (even and odd rows) added at the end: the same sums as the
;; JavaScript kernels in another order, so results agree to rounding.
;; Build: npm run build:kernels (scripts/build-kernels.cjs) writes kernelsWasm.ts from this file.
(module
  (memory (export "memory") 1)

  ;; out[p] += lane 0 + lane 1 of s
  (func $addLanes (param $p i32) (param $s v128)
    (f64.store (local.get $p)
      (f64.add (f64.load (local.get $p))
        (f64.add (f64x2.extract_lane 0 (local.get $s)) (f64x2.extract_lane 1 (local.get $s))))))

  ;; gram(a, k, len, sb, out): out[j*k + l] += sum_{r < len} a_j[r] a_l[r] for the 3 x 3 tiles on
  ;; and above the diagonal (l >= j in steps of 3); column j at a + j*sb; k a multiple of 3.
  (func (export "gram") (param $a i32) (param $k i32) (param $len i32) (param $sb i32) (param $out i32)
    (local $j i32) (local $l i32) (local $r i32) (local $rb i32) (local $kb i32) (local $o i32)
    (local $a0 i32) (local $a1 i32) (local $a2 i32) (local $b0 i32) (local $b1 i32) (local $b2 i32)
    (local $x0 v128) (local $x1 v128) (local $x2 v128) (local $y0 v128) (local $y1 v128) (local $y2 v128)
    (local $s00 v128) (local $s01 v128) (local $s02 v128)
    (local $s10 v128) (local $s11 v128) (local $s12 v128)
    (local $s20 v128) (local $s21 v128) (local $s22 v128)
    (local.set $rb (i32.shl (local.get $len) (i32.const 3)))
    (local.set $kb (i32.shl (local.get $k) (i32.const 3)))
    (local.set $j (i32.const 0))
    (block $jDone (loop $jLoop
      (br_if $jDone (i32.gt_s (i32.add (local.get $j) (i32.const 3)) (local.get $k)))
      (local.set $a0 (i32.add (local.get $a) (i32.mul (local.get $j) (local.get $sb))))
      (local.set $a1 (i32.add (local.get $a0) (local.get $sb)))
      (local.set $a2 (i32.add (local.get $a1) (local.get $sb)))
      (local.set $l (local.get $j))
      (block $lDone (loop $lLoop
        (br_if $lDone (i32.gt_s (i32.add (local.get $l) (i32.const 3)) (local.get $k)))
        (local.set $b0 (i32.add (local.get $a) (i32.mul (local.get $l) (local.get $sb))))
        (local.set $b1 (i32.add (local.get $b0) (local.get $sb)))
        (local.set $b2 (i32.add (local.get $b1) (local.get $sb)))
        (local.set $s00 (v128.const f64x2 0 0)) (local.set $s01 (v128.const f64x2 0 0)) (local.set $s02 (v128.const f64x2 0 0))
        (local.set $s10 (v128.const f64x2 0 0)) (local.set $s11 (v128.const f64x2 0 0)) (local.set $s12 (v128.const f64x2 0 0))
        (local.set $s20 (v128.const f64x2 0 0)) (local.set $s21 (v128.const f64x2 0 0)) (local.set $s22 (v128.const f64x2 0 0))
        (local.set $r (i32.const 0))
        (block $rDone (loop $rLoop
          (br_if $rDone (i32.ge_u (local.get $r) (local.get $rb)))
          (local.set $x0 (v128.load (i32.add (local.get $a0) (local.get $r))))
          (local.set $x1 (v128.load (i32.add (local.get $a1) (local.get $r))))
          (local.set $x2 (v128.load (i32.add (local.get $a2) (local.get $r))))
          (local.set $y0 (v128.load (i32.add (local.get $b0) (local.get $r))))
          (local.set $y1 (v128.load (i32.add (local.get $b1) (local.get $r))))
          (local.set $y2 (v128.load (i32.add (local.get $b2) (local.get $r))))
          (local.set $s00 (f64x2.add (local.get $s00) (f64x2.mul (local.get $x0) (local.get $y0))))
          (local.set $s01 (f64x2.add (local.get $s01) (f64x2.mul (local.get $x0) (local.get $y1))))
          (local.set $s02 (f64x2.add (local.get $s02) (f64x2.mul (local.get $x0) (local.get $y2))))
          (local.set $s10 (f64x2.add (local.get $s10) (f64x2.mul (local.get $x1) (local.get $y0))))
          (local.set $s11 (f64x2.add (local.get $s11) (f64x2.mul (local.get $x1) (local.get $y1))))
          (local.set $s12 (f64x2.add (local.get $s12) (f64x2.mul (local.get $x1) (local.get $y2))))
          (local.set $s20 (f64x2.add (local.get $s20) (f64x2.mul (local.get $x2) (local.get $y0))))
          (local.set $s21 (f64x2.add (local.get $s21) (f64x2.mul (local.get $x2) (local.get $y1))))
          (local.set $s22 (f64x2.add (local.get $s22) (f64x2.mul (local.get $x2) (local.get $y2))))
          (local.set $r (i32.add (local.get $r) (i32.const 16)))
          (br $rLoop)))
        (local.set $o (i32.add (local.get $out)
          (i32.shl (i32.add (i32.mul (local.get $j) (local.get $k)) (local.get $l)) (i32.const 3))))
        (call $addLanes (local.get $o) (local.get $s00))
        (call $addLanes (i32.add (local.get $o) (i32.const 8)) (local.get $s01))
        (call $addLanes (i32.add (local.get $o) (i32.const 16)) (local.get $s02))
        (local.set $o (i32.add (local.get $o) (local.get $kb)))
        (call $addLanes (local.get $o) (local.get $s10))
        (call $addLanes (i32.add (local.get $o) (i32.const 8)) (local.get $s11))
        (call $addLanes (i32.add (local.get $o) (i32.const 16)) (local.get $s12))
        (local.set $o (i32.add (local.get $o) (local.get $kb)))
        (call $addLanes (local.get $o) (local.get $s20))
        (call $addLanes (i32.add (local.get $o) (i32.const 8)) (local.get $s21))
        (call $addLanes (i32.add (local.get $o) (i32.const 16)) (local.get $s22))
        (local.set $l (i32.add (local.get $l) (i32.const 3)))
        (br $lLoop)))
      (local.set $j (i32.add (local.get $j) (i32.const 3)))
      (br $jLoop))))

  ;; scaleBlock(x, k, len, sb, sw, c, f, u, out): for each column j (at x + j*sb) and row r < len,
;; d = x_j[r] - c[j]; out[j] += sum_r u[r] d (when u is not 0: the score part of the pass); then
;; x_j[r] = sw[r] (d f[j]) in place (the block of the information: rows weighted by sqrt(W), columns
;; centred and scaled by f = 1 / scale). c, f and out hold k doubles; sw and u hold len.
  (func (export "scaleBlock") (param $x i32) (param $k i32) (param $len i32) (param $sb i32) (param $sw i32)
      (param $c i32) (param $f i32) (param $u i32) (param $out i32)
    (local $j i32) (local $r i32) (local $rb i32) (local $p i32) (local $cj v128) (local $fj v128)
    (local $d v128) (local $s v128)
    (local.set $rb (i32.shl (local.get $len) (i32.const 3)))
    (local.set $j (i32.const 0))
    (block $jDone (loop $jLoop
      (br_if $jDone (i32.ge_s (local.get $j) (local.get $k)))
      (local.set $p (i32.add (local.get $x) (i32.mul (local.get $j) (local.get $sb))))
      (local.set $cj (v128.load64_splat (i32.add (local.get $c) (i32.shl (local.get $j) (i32.const 3)))))
      (local.set $fj (v128.load64_splat (i32.add (local.get $f) (i32.shl (local.get $j) (i32.const 3)))))
      (local.set $s (v128.const f64x2 0 0))
      (local.set $r (i32.const 0))
      (block $rDone (loop $rLoop
        (br_if $rDone (i32.ge_u (local.get $r) (local.get $rb)))
        (local.set $d (f64x2.sub (v128.load (i32.add (local.get $p) (local.get $r))) (local.get $cj)))
        (if (local.get $u) (then
          (local.set $s (f64x2.add (local.get $s)
            (f64x2.mul (v128.load (i32.add (local.get $u) (local.get $r))) (local.get $d))))))
        (v128.store (i32.add (local.get $p) (local.get $r))
          (f64x2.mul (v128.load (i32.add (local.get $sw) (local.get $r))) (f64x2.mul (local.get $d) (local.get $fj))))
        (local.set $r (i32.add (local.get $r) (i32.const 16)))
        (br $rLoop)))
      (if (local.get $u) (then
        (call $addLanes (i32.add (local.get $out) (i32.shl (local.get $j) (i32.const 3))) (local.get $s))))
      (local.set $j (i32.add (local.get $j) (i32.const 1)))
      (br $jLoop))))

  ;; weightedGrams(z, q, len, v, sb, m, out): out[(a*q + b)*m + k] += sum_{r < len} z_a[r] z_b[r] v_k[r]
  ;; for a <= b, in tiles of two columns (a, a+1) against four weight vectors, then one at a time
  ;; (entries with a = b + 1 are written too and belong to the lower triangle, as in
  ;; accumulateWeightedGrams); column j at z + j*sb, weight vector k at v + k*sb.
  (func (export "weightedGrams") (param $z i32) (param $q i32) (param $len i32) (param $v i32) (param $sb i32) (param $m i32) (param $out i32)
    (local $a i32) (local $b i32) (local $a1 i32) (local $k i32) (local $r i32) (local $rb i32) (local $two i32)
    (local $pa i32) (local $pc i32) (local $pb i32) (local $v0 i32) (local $v1 i32) (local $v2 i32) (local $v3 i32)
    (local $o0 i32) (local $o1 i32)
    (local $t0 v128) (local $t1 v128) (local $xb v128) (local $w v128)
    (local $s00 v128) (local $s01 v128) (local $s02 v128) (local $s03 v128)
    (local $s10 v128) (local $s11 v128) (local $s12 v128) (local $s13 v128)
    (local.set $rb (i32.shl (local.get $len) (i32.const 3)))
    (local.set $b (i32.const 0))
    (block $bDone (loop $bLoop
      (br_if $bDone (i32.ge_s (local.get $b) (local.get $q)))
      (local.set $pb (i32.add (local.get $z) (i32.mul (local.get $b) (local.get $sb))))
      (local.set $a (i32.const 0))
      (block $aDone (loop $aLoop
        (br_if $aDone (i32.gt_s (local.get $a) (local.get $b)))
        ;; second column of the tile: a + 1, or a again at the last column
        (local.set $a1 (select (i32.add (local.get $a) (i32.const 1)) (local.get $a)
          (i32.lt_s (i32.add (local.get $a) (i32.const 1)) (local.get $q))))
        (local.set $two (i32.ne (local.get $a1) (local.get $a)))
        (local.set $pa (i32.add (local.get $z) (i32.mul (local.get $a) (local.get $sb))))
        (local.set $pc (i32.add (local.get $z) (i32.mul (local.get $a1) (local.get $sb))))
        (local.set $o0 (i32.add (local.get $out) (i32.shl
          (i32.mul (i32.add (i32.mul (local.get $a) (local.get $q)) (local.get $b)) (local.get $m)) (i32.const 3))))
        (local.set $o1 (i32.add (local.get $out) (i32.shl
          (i32.mul (i32.add (i32.mul (local.get $a1) (local.get $q)) (local.get $b)) (local.get $m)) (i32.const 3))))
        (local.set $k (i32.const 0))
        (block $k4Done (loop $k4Loop
          (br_if $k4Done (i32.gt_s (i32.add (local.get $k) (i32.const 4)) (local.get $m)))
          (local.set $v0 (i32.add (local.get $v) (i32.mul (local.get $k) (local.get $sb))))
          (local.set $v1 (i32.add (local.get $v0) (local.get $sb)))
          (local.set $v2 (i32.add (local.get $v1) (local.get $sb)))
          (local.set $v3 (i32.add (local.get $v2) (local.get $sb)))
          (local.set $s00 (v128.const f64x2 0 0)) (local.set $s01 (v128.const f64x2 0 0))
          (local.set $s02 (v128.const f64x2 0 0)) (local.set $s03 (v128.const f64x2 0 0))
          (local.set $s10 (v128.const f64x2 0 0)) (local.set $s11 (v128.const f64x2 0 0))
          (local.set $s12 (v128.const f64x2 0 0)) (local.set $s13 (v128.const f64x2 0 0))
          (local.set $r (i32.const 0))
          (block $rDone (loop $rLoop
            (br_if $rDone (i32.ge_u (local.get $r) (local.get $rb)))
            (local.set $xb (v128.load (i32.add (local.get $pb) (local.get $r))))
            (local.set $t0 (f64x2.mul (v128.load (i32.add (local.get $pa) (local.get $r))) (local.get $xb)))
            (local.set $t1 (f64x2.mul (v128.load (i32.add (local.get $pc) (local.get $r))) (local.get $xb)))
            (local.set $w (v128.load (i32.add (local.get $v0) (local.get $r))))
            (local.set $s00 (f64x2.add (local.get $s00) (f64x2.mul (local.get $t0) (local.get $w))))
            (local.set $s10 (f64x2.add (local.get $s10) (f64x2.mul (local.get $t1) (local.get $w))))
            (local.set $w (v128.load (i32.add (local.get $v1) (local.get $r))))
            (local.set $s01 (f64x2.add (local.get $s01) (f64x2.mul (local.get $t0) (local.get $w))))
            (local.set $s11 (f64x2.add (local.get $s11) (f64x2.mul (local.get $t1) (local.get $w))))
            (local.set $w (v128.load (i32.add (local.get $v2) (local.get $r))))
            (local.set $s02 (f64x2.add (local.get $s02) (f64x2.mul (local.get $t0) (local.get $w))))
            (local.set $s12 (f64x2.add (local.get $s12) (f64x2.mul (local.get $t1) (local.get $w))))
            (local.set $w (v128.load (i32.add (local.get $v3) (local.get $r))))
            (local.set $s03 (f64x2.add (local.get $s03) (f64x2.mul (local.get $t0) (local.get $w))))
            (local.set $s13 (f64x2.add (local.get $s13) (f64x2.mul (local.get $t1) (local.get $w))))
            (local.set $r (i32.add (local.get $r) (i32.const 16)))
            (br $rLoop)))
          (call $addLanes (i32.add (local.get $o0) (i32.shl (local.get $k) (i32.const 3))) (local.get $s00))
          (call $addLanes (i32.add (local.get $o0) (i32.shl (i32.add (local.get $k) (i32.const 1)) (i32.const 3))) (local.get $s01))
          (call $addLanes (i32.add (local.get $o0) (i32.shl (i32.add (local.get $k) (i32.const 2)) (i32.const 3))) (local.get $s02))
          (call $addLanes (i32.add (local.get $o0) (i32.shl (i32.add (local.get $k) (i32.const 3)) (i32.const 3))) (local.get $s03))
          (if (local.get $two) (then
            (call $addLanes (i32.add (local.get $o1) (i32.shl (local.get $k) (i32.const 3))) (local.get $s10))
            (call $addLanes (i32.add (local.get $o1) (i32.shl (i32.add (local.get $k) (i32.const 1)) (i32.const 3))) (local.get $s11))
            (call $addLanes (i32.add (local.get $o1) (i32.shl (i32.add (local.get $k) (i32.const 2)) (i32.const 3))) (local.get $s12))
            (call $addLanes (i32.add (local.get $o1) (i32.shl (i32.add (local.get $k) (i32.const 3)) (i32.const 3))) (local.get $s13))))
          (local.set $k (i32.add (local.get $k) (i32.const 4)))
          (br $k4Loop)))
        (block $k1Done (loop $k1Loop
          (br_if $k1Done (i32.ge_s (local.get $k) (local.get $m)))
          (local.set $v0 (i32.add (local.get $v) (i32.mul (local.get $k) (local.get $sb))))
          (local.set $s00 (v128.const f64x2 0 0))
          (local.set $s10 (v128.const f64x2 0 0))
          (local.set $r (i32.const 0))
          (block $r1Done (loop $r1Loop
            (br_if $r1Done (i32.ge_u (local.get $r) (local.get $rb)))
            (local.set $xb (f64x2.mul (v128.load (i32.add (local.get $pb) (local.get $r)))
              (v128.load (i32.add (local.get $v0) (local.get $r)))))
            (local.set $s00 (f64x2.add (local.get $s00) (f64x2.mul (v128.load (i32.add (local.get $pa) (local.get $r))) (local.get $xb))))
            (local.set $s10 (f64x2.add (local.get $s10) (f64x2.mul (v128.load (i32.add (local.get $pc) (local.get $r))) (local.get $xb))))
            (local.set $r (i32.add (local.get $r) (i32.const 16)))
            (br $r1Loop)))
          (call $addLanes (i32.add (local.get $o0) (i32.shl (local.get $k) (i32.const 3))) (local.get $s00))
          (if (local.get $two) (then
            (call $addLanes (i32.add (local.get $o1) (i32.shl (local.get $k) (i32.const 3))) (local.get $s10))))
          (local.set $k (i32.add (local.get $k) (i32.const 1)))
          (br $k1Loop)))
        (local.set $a (i32.add (local.get $a) (i32.const 2)))
        (br $aLoop)))
      (local.set $b (i32.add (local.get $b) (i32.const 1)))
      (br $bLoop))))
)
