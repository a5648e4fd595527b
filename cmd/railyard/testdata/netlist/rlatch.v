// a latch of resistive switches: rcmos in, a keeper through two rtran
module rlatch (input d, input en, input \en#b , output q, output y);
  supply1 vdd;
  supply0 gnd;
  trireg (small) s;
  wire qb, m;
  rcmos t1 (s, d, en, \en#b );
  pmos p1 (qb, vdd, s);
  nmos n1 (qb, gnd, s);
  pmos p2 (q, vdd, qb);
  nmos n2 (q, gnd, qb);
  rtran k1 (q, m);
  rtran k2 (m, s);
  tran w (q, y);
  pullup (weak1) pu (d);
endmodule
