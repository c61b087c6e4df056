; Robot arm reach envelope vs. an obstacle disc: the SMT-LIB 2.6 form of
; samples/arm-reach.tess.  Scenario of our own invention (demo data).
; Unsatisfiable: see the argument in arm-reach.tess.
(set-info :smt-lib-version 2.6)
(set-logic QF_NRA)
(set-info :status unsat)
(declare-fun x () Real)
(declare-fun y () Real)
(assert (<= 1 (+ (* x x) (* y y)) 9))
(assert (<= (+ (* (- x 5) (- x 5)) (* y y)) (* 1.5 1.5)))
(check-sat)
(exit)
