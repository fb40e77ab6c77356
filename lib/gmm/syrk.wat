;; Symmetric cross-product kernel S = Q'Q in WebAssembly SIMD (f64x2): the source of the bytes in
;; lib/gmm/syrk-wasm-bytes.ts (assembled with the `wabt` npm package by `npm run build:wasm`;
;; tests/gmm/syrk-wasm.test.ts checks that the committed bytes equal this file assembled).
;;
;; syrk(q, M, p, s, ch): Q column-major with M (even) rows and p (multiple of 4) columns at byte
;; offset q; S (p x p, row-major, zeroed) at byte offset s. Rows are processed in chunks of ch so the
;; working set stays in cache; within a chunk, 2x4 blocks of S accumulate in f64x2 registers over
;; pairs of rows. Only blocks on or above the diagonal are computed (a block row starts at the
;; 4-aligned column below the diagonal); the caller mirrors the upper triangle.
(module
  (import "env" "memory" (memory 1))
  (func (export "syrk") (param $q i32) (param $M i32) (param $p i32) (param $s i32) (param $ch i32)
    (local $colBytes i32) (local $t0 i32) (local $tStart i32) (local $tEnd i32) (local $a i32)
    (local $b i32) (local $A0 i32) (local $A1 i32) (local $B0 i32) (local $B1 i32) (local $B2 i32)
    (local $B3 i32) (local $tb i32) (local $sAddr i32) (local $rowBytes i32)
    (local $acc00 v128) (local $acc01 v128) (local $acc02 v128) (local $acc03 v128)
    (local $acc10 v128) (local $acc11 v128) (local $acc12 v128) (local $acc13 v128)
    (local $x0 v128) (local $x1 v128) (local $y v128)
    ;; byte strides of a column of Q and a row of S
    (local.set $colBytes (i32.shl (local.get $M) (i32.const 3)))
    (local.set $rowBytes (i32.shl (local.get $p) (i32.const 3)))
    (local.set $t0 (i32.const 0))
    ;; for each chunk of rows [t0, min(t0 + ch, M))
    (block $chunksDone
      (loop $chunks
        (br_if $chunksDone (i32.ge_u (local.get $t0) (local.get $M)))
        (local.set $tStart (i32.shl (local.get $t0) (i32.const 3)))
        (local.set $tEnd
          (i32.shl
            (select
              (i32.add (local.get $t0) (local.get $ch))
              (local.get $M)
              (i32.lt_u (i32.add (local.get $t0) (local.get $ch)) (local.get $M)))
            (i32.const 3)))
        (local.set $a (i32.const 0))
        ;; for each pair of columns a, a + 1
        (block $rowsDone
          (loop $rows
            (br_if $rowsDone (i32.ge_u (local.get $a) (local.get $p)))
            (local.set $A0 (i32.add (local.get $q) (i32.mul (local.get $a) (local.get $colBytes))))
            (local.set $A1 (i32.add (local.get $A0) (local.get $colBytes)))
            (local.set $b (i32.and (local.get $a) (i32.const -4)))
            ;; for each block of four columns b .. b + 3 on or right of the diagonal
            (block $colsDone
              (loop $cols
                (br_if $colsDone (i32.ge_u (local.get $b) (local.get $p)))
                (local.set $B0 (i32.add (local.get $q) (i32.mul (local.get $b) (local.get $colBytes))))
                (local.set $B1 (i32.add (local.get $B0) (local.get $colBytes)))
                (local.set $B2 (i32.add (local.get $B1) (local.get $colBytes)))
                (local.set $B3 (i32.add (local.get $B2) (local.get $colBytes)))
                (local.set $acc00 (v128.const i64x2 0 0))
                (local.set $acc01 (v128.const i64x2 0 0))
                (local.set $acc02 (v128.const i64x2 0 0))
                (local.set $acc03 (v128.const i64x2 0 0))
                (local.set $acc10 (v128.const i64x2 0 0))
                (local.set $acc11 (v128.const i64x2 0 0))
                (local.set $acc12 (v128.const i64x2 0 0))
                (local.set $acc13 (v128.const i64x2 0 0))
                (local.set $tb (local.get $tStart))
                ;; two rows at a time (16 bytes of each column)
                (block $pairsDone
                  (loop $pairs
                    (br_if $pairsDone (i32.ge_u (local.get $tb) (local.get $tEnd)))
                    (local.set $x0 (v128.load (i32.add (local.get $A0) (local.get $tb))))
                    (local.set $x1 (v128.load (i32.add (local.get $A1) (local.get $tb))))
                    (local.set $y (v128.load (i32.add (local.get $B0) (local.get $tb))))
                    (local.set $acc00 (f64x2.add (local.get $acc00) (f64x2.mul (local.get $x0) (local.get $y))))
                    (local.set $acc10 (f64x2.add (local.get $acc10) (f64x2.mul (local.get $x1) (local.get $y))))
                    (local.set $y (v128.load (i32.add (local.get $B1) (local.get $tb))))
                    (local.set $acc01 (f64x2.add (local.get $acc01) (f64x2.mul (local.get $x0) (local.get $y))))
                    (local.set $acc11 (f64x2.add (local.get $acc11) (f64x2.mul (local.get $x1) (local.get $y))))
                    (local.set $y (v128.load (i32.add (local.get $B2) (local.get $tb))))
                    (local.set $acc02 (f64x2.add (local.get $acc02) (f64x2.mul (local.get $x0) (local.get $y))))
                    (local.set $acc12 (f64x2.add (local.get $acc12) (f64x2.mul (local.get $x1) (local.get $y))))
                    (local.set $y (v128.load (i32.add (local.get $B3) (local.get $tb))))
                    (local.set $acc03 (f64x2.add (local.get $acc03) (f64x2.mul (local.get $x0) (local.get $y))))
                    (local.set $acc13 (f64x2.add (local.get $acc13) (f64x2.mul (local.get $x1) (local.get $y))))
                    (local.set $tb (i32.add (local.get $tb) (i32.const 16)))
                    (br $pairs)))
                ;; S[a, b + j] += both lanes of acc0j; S[a + 1, b + j] += both lanes of acc1j
                (local.set $sAddr
                  (i32.add
                    (i32.add (local.get $s) (i32.mul (local.get $a) (local.get $rowBytes)))
                    (i32.shl (local.get $b) (i32.const 3))))
                (f64.store (local.get $sAddr)
                  (f64.add
                    (f64.add (f64.load (local.get $sAddr)) (f64x2.extract_lane 0 (local.get $acc00)))
                    (f64x2.extract_lane 1 (local.get $acc00))))
                (f64.store offset=8 (local.get $sAddr)
                  (f64.add
                    (f64.add (f64.load offset=8 (local.get $sAddr)) (f64x2.extract_lane 0 (local.get $acc01)))
                    (f64x2.extract_lane 1 (local.get $acc01))))
                (f64.store offset=16 (local.get $sAddr)
                  (f64.add
                    (f64.add (f64.load offset=16 (local.get $sAddr)) (f64x2.extract_lane 0 (local.get $acc02)))
                    (f64x2.extract_lane 1 (local.get $acc02))))
                (f64.store offset=24 (local.get $sAddr)
                  (f64.add
                    (f64.add (f64.load offset=24 (local.get $sAddr)) (f64x2.extract_lane 0 (local.get $acc03)))
                    (f64x2.extract_lane 1 (local.get $acc03))))
                (f64.store (i32.add (local.get $sAddr) (local.get $rowBytes))
                  (f64.add
                    (f64.add (f64.load (i32.add (local.get $sAddr) (local.get $rowBytes))) (f64x2.extract_lane 0 (local.get $acc10)))
                    (f64x2.extract_lane 1 (local.get $acc10))))
                (f64.store offset=8 (i32.add (local.get $sAddr) (local.get $rowBytes))
                  (f64.add
                    (f64.add (f64.load offset=8 (i32.add (local.get $sAddr) (local.get $rowBytes))) (f64x2.extract_lane 0 (local.get $acc11)))
                    (f64x2.extract_lane 1 (local.get $acc11))))
                (f64.store offset=16 (i32.add (local.get $sAddr) (local.get $rowBytes))
                  (f64.add
                    (f64.add (f64.load offset=16 (i32.add (local.get $sAddr) (local.get $rowBytes))) (f64x2.extract_lane 0 (local.get $acc12)))
                    (f64x2.extract_lane 1 (local.get $acc12))))
                (f64.store offset=24 (i32.add (local.get $sAddr) (local.get $rowBytes))
                  (f64.add
                    (f64.add (f64.load offset=24 (i32.add (local.get $sAddr) (local.get $rowBytes))) (f64x2.extract_lane 0 (local.get $acc13)))
                    (f64x2.extract_lane 1 (local.get $acc13))))
                (local.set $b (i32.add (local.get $b) (i32.const 4)))
                (br $cols)))
            (local.set $a (i32.add (local.get $a) (i32.const 2)))
            (br $rows)))
        (local.set $t0 (i32.add (local.get $t0) (local.get $ch)))
        (br $chunks)))))
