operand-select latch: the register or the immediate operand, held for the ALU
* exhaustive: PASS
* railyard demo in the card format (a transistor netlist, as a cell library
* or schematic netlister writes one): a 2:1 transmission-gate selector picks
* reg (sel=0) or imm (sel=1) onto m; a transmission-gate latch passes m to
* s while clk=1 and keeps it through the loop s -> sb -> opq -> s while
* clk=0. Shows: .param and {expressions}, subcircuits with instance names
* (xtr.mn), level-1 .model cards setting the technology, + continuations,
* and C cards as node capacitance. Open it with the steps beside it.
.param wn=0.36u wp={2*wn} lmin=0.18u
.model nch nmos (level=1 vto=0.45 kp=170u gamma=0.4 phi=0.7)
.model pch pmos (level=1 vto=-0.45 kp=60u gamma=0.4 phi=0.7)

.subckt opsel_latch sel reg imm clk opq vdd gnd
*.pininfo sel:i reg:i imm:i clk:i opq:o vdd:p gnd:g
xsi sel sel_b vdd gnd inv
xci clk clk_b vdd gnd inv
* the selector: two transmission gates onto the shared node m
xtr reg m sel_b sel vdd gnd tg
xti imm m sel sel_b vdd gnd tg
* the latch: m into s while clk=1, the loop keeps s while clk=0
xtl m s clk clk_b vdd gnd tg
xi1 s sb vdd gnd inv
xi2 sb opq vdd gnd inv
xtf opq s clk_b clk vdd gnd tg
cm m gnd 6f   $ the selector's wire to the latch
cs s gnd 4f
.ends opsel_latch

.subckt inv a y vdd gnd
mn y a gnd gnd nch w={wn} l={lmin}
mp y a vdd vdd pch w={wp} l={lmin}
.ends inv

* a transmission gate: a to b while en=1 (enb=0)
.subckt tg a b en enb vdd gnd
mn a en b gnd nch w={wn} l={lmin}
mp a enb b vdd pch
+ w={wp} l={lmin}
.ends tg
