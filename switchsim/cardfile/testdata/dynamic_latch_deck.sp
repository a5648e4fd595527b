* railyard testbench for dynamic_latch: 3 steps of 3n, edges of 50p
* from demo:dynamic_latch
* railyard's results are first-order switch-level estimates: this deck is for confirming them

.subckt dynamic_latch clk d q vdd gnd
*.pininfo clk:i d:i q:o vdd:p gnd:g
mclkinv.p vdd clk clk_b vdd pfet_l1 w=720n l=180n
mclkinv.n clk_b clk gnd gnd nfet_l1 w=360n l=180n
mpass.n d clk s gnd nfet_l1 w=360n l=180n
mpass.p d clk_b s vdd pfet_l1 w=720n l=180n
mrd.p vdd s s_b vdd pfet_l1 w=720n l=180n
mrd.n s_b s gnd gnd nfet_l1 w=360n l=180n
mout.p vdd s_b q vdd pfet_l1 w=720n l=180n
mout.n q s_b gnd gnd nfet_l1 w=360n l=180n
* node capacitances the design gives
cn_s s gnd 20f
* railyard's default node capacitances (cnode, cdiff on diffusion nodes) on the other nodes: delete those your device models account for
cn_clk clk gnd 5f
cn_d d gnd 5f
cn_q q gnd 5f
cn_clk_b clk_b gnd 5f
cn_s_b s_b gnd 5f
.ends dynamic_latch

* level-1 models from railyard's technology "generic" (KP in A/V^2, VTO in V)
.model nfet_l1 nmos (level=1 vto=450m kp=170u gamma=400m phi=700m)
.model pfet_l1 pmos (level=1 vto=-450m kp=60u gamma=400m phi=700m)

vvdd vdd 0 dc 1.8
xdut clk d q vdd 0 dynamic_latch

* inputs: step k holds from (k-1) x 3n to k x 3n; x is half the supply
vclk clk 0 pwl(0 0 3n 0 3.05n 1.8 6n 1.8 6.05n 0)
vd d 0 pwl(0 1.8 6n 1.8 6.05n 0)
* nodes floating after step 1, at the charge railyard stores (a stored X at half the supply)
.ic v(xdut.s)=900m
.tran 12.5p 9n
* checks at the end of each step: railyard's logic thresholds are vil 0.737 V and vih 0.961 V
* step 1 "closed before any write": railyard wants s Z (floating: no path drives it)
.measure tran s1_s find v(xdut.s) at=3n
* step 1 "closed before any write": railyard wants q X (between vil and vih, or unknown)
.measure tran s1_q find v(q) at=3n
* step 2 "write 1": railyard wants s 1 (at or above vih)
.measure tran s2_s find v(xdut.s) at=6n
* step 2 "write 1": railyard wants q 1 (at or above vih)
.measure tran s2_q find v(q) at=6n
* step 3 "hold": railyard wants s Z (floating: no path drives it)
.measure tran s3_s find v(xdut.s) at=9n
* step 3 "hold": railyard wants q 1 (at or above vih)
.measure tran s3_q find v(q) at=9n
.end
