* railyard testbench for tlatch: 5 steps of 10n, edges of 100p
* from t.sp, latch.steps
* railyard's results are first-order switch-level estimates: this deck is for confirming them

.subckt tlatch d clk q VDD gnd
*.pininfo d:i clk:i q:o VDD:p gnd:g
mXinv0.MN clkb clk gnd gnd nfet_l1 w=360n l=180n
mXinv0.MP clkb clk VDD VDD pfet_l1 w=720n l=180n
MN1 d clk s gnd nfet_l1 w=360n l=180n
MP1 d clkb s VDD pfet_l1 w=720n l=180n
mXinv1.MN qb s gnd gnd nfet_l1 w=360n l=180n
mXinv1.MP qb s VDD VDD pfet_l1 w=720n l=180n
mXinv2.MN q qb gnd gnd nfet_l1 w=360n l=180n
mXinv2.MP q qb VDD VDD pfet_l1 w=720n l=180n
MN2 q clkb s gnd nfet_l1 w=360n l=180n
MP2 q clk s VDD pfet_l1 w=720n l=180n
* railyard's default node capacitances (cnode, cdiff on diffusion nodes) on the other nodes: delete those your device models account for
cn_d d gnd 5f
cn_clk clk gnd 5f
cn_q q gnd 5f
cn_clkb clkb gnd 5f
cn_s s gnd 5f
cn_qb qb gnd 5f
.ends tlatch

* level-1 models from railyard's technology "generic" (KP in A/V^2, VTO in V)
.model nfet_l1 nmos (level=1 vto=450m kp=170u gamma=400m phi=700m)
.model pfet_l1 pmos (level=1 vto=-450m kp=60u gamma=400m phi=700m)

vVDD VDD 0 dc 1.8
xdut d clk q VDD 0 tlatch

* inputs: step k holds from (k-1) x 10n to k x 10n; x is half the supply
vd d_drv 0 pwl(0 0 10n 0 10.1n 1.8 30n 1.8 30.1n 0)
* d is released (z) in some steps: a switch cuts it off while the enable source is low
sd d_drv d d_en 0 ry_release
vd_en d_en 0 pwl(0 1 40n 1 40.1n 0)
vclk clk 0 pwl(0 1.8 20n 1.8 20.1n 0)
.model ry_release sw (vt=0.5 vh=0.1 ron=1 roff=1e12)
.tran 25p 50n
* checks at the end of each step: railyard's logic thresholds are vil 0.737 V and vih 0.961 V
* step 1 "write 0": railyard wants q 0 (at or below vil)
.measure tran s1_q find v(q) at=10n
* step 2 "write 1": railyard wants q 1 (at or above vih)
.measure tran s2_q find v(q) at=20n
* step 3 "close": railyard wants q 1 (at or above vih)
.measure tran s3_q find v(q) at=30n
* step 4 "hold": railyard wants q 1 (at or above vih)
.measure tran s4_q find v(q) at=40n
* step 5 "d released": railyard wants q 1 (at or above vih)
.measure tran s5_q find v(q) at=50n
.end
