Operand latch, extracted: escaped names, a models include, R and C cards
.include oplat_models.inc
* QR is Q<0> through a wire resistor; RK a leak to ground on the stored node
.subckt OPLATCH D CLK Q<0> QR VDD VSS
XI0 CLK clk_b# VDD VSS INV
MN1 D CLK s$1 VSS nch W=0.4u L=0.18u
MP1 D clk_b# s$1 VDD pch W=0.8u L=0.18u
XI1 s$1 qb VDD VSS INV
XI2 qb Q<0> VDD VSS INV
MN2 Q<0> clk_b# s$1 VSS nch W=0.4u L=0.18u
MP2 Q<0> CLK s$1 VDD pch W=0.8u L=0.18u
RQ Q<0> QR 200
RK s$1 VSS 1meg
C1 s$1 VSS 3.5f
C2 Q<0> VSS 1.25f
CQR QR VSS 0.5f
.ends
.subckt INV A Y VDD VSS
MN Y A VSS VSS nch W=0.4u L=0.18u
MP Y A VDD VDD pch W=0.8u L=0.18u
.ends
