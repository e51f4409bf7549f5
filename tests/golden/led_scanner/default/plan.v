// binsynth structural model of plan 'led-rows': 1 counter unit(s), 30 gate(s), typical delays at 5 V.
// Counting edge: falling edge of clk. The count starts from all zeros; sample the outputs just before each counting edge.
`timescale 1ns/1ps
module led_rows (clk, row0, row1, row2, row3, row4, row5, row6, row7, blank);
  input clk;
  output row0;
  output row1;
  output row2;
  output row3;
  output row4;
  output row5;
  output row6;
  output row7;
  output blank;
  reg Q5, Q4, Q6, Q3, Q2, Q1, Q0;
  wire n9, n10, n11, n12, n13, n14, n15, blank_n, n18, n19, n21, n22, n23, n25, n26, n27, n30, n32, n33, n35, n36, n38;

  // U1 unit A: 74HC4040 12-stage binary ripple counter; counts on the falling edge of CLK, modulus 4096
  //   Q5 (pin 2) -> Q5: 54 ns after the counting edge
  //   Q4 (pin 3) -> Q4: 46 ns after the counting edge
  //   Q6 (pin 4) -> Q6: 62 ns after the counting edge
  //   Q3 (pin 5) -> Q3: 38 ns after the counting edge
  //   Q2 (pin 6) -> Q2: 30 ns after the counting edge
  //   Q1 (pin 7) -> Q1: 22 ns after the counting edge
  //   Q0 (pin 9) -> Q0: 14 ns after the counting edge
  reg [11:0] U1_A_count, U1_A_next;
  reg U1_A_clk_was;
  initial begin
    U1_A_count = 0;
    Q5 = 1'b0;
    Q4 = 1'b0;
    Q6 = 1'b0;
    Q3 = 1'b0;
    Q2 = 1'b0;
    Q1 = 1'b0;
    Q0 = 1'b0;
  end
  always @(clk) begin
    if (U1_A_clk_was === 1'b1 && clk === 1'b0) begin
      U1_A_next = (U1_A_count == 4095) ? 12'd0 : U1_A_count + 12'd1;
      if (U1_A_next[5] != U1_A_count[5]) Q5 <= #(54) U1_A_next[5];
      if (U1_A_next[4] != U1_A_count[4]) Q4 <= #(46) U1_A_next[4];
      if (U1_A_next[6] != U1_A_count[6]) Q6 <= #(62) U1_A_next[6];
      if (U1_A_next[3] != U1_A_count[3]) Q3 <= #(38) U1_A_next[3];
      if (U1_A_next[2] != U1_A_count[2]) Q2 <= #(30) U1_A_next[2];
      if (U1_A_next[1] != U1_A_count[1]) Q1 <= #(22) U1_A_next[1];
      if (U1_A_next[0] != U1_A_count[0]) Q0 <= #(14) U1_A_next[0];
      U1_A_count = U1_A_next;
    end
    U1_A_clk_was = clk;
  end

  // decode logic: one primitive per physical gate, named chip_unit
  // U2_A: 74HC04 not, 7 ns (gate g1)
  not #(7) U2_A (n9, Q2);
  // U2_B: 74HC04 not, 7 ns (gate g2)
  not #(7) U2_B (n10, Q3);
  // U3_A: 74HC02 nor, 7 ns (gate g3)
  nor #(7) U3_A (n11, Q0, Q1);
  // U4_A: 74HC11 and, 10 ns (gate g4)
  and #(10) U4_A (n12, n9, n10, n11);
  // U2_C: 74HC04 not, 7 ns (gate g5)
  not #(7) U2_C (n13, Q5);
  // U2_D: 74HC04 not, 7 ns (gate g6)
  not #(7) U2_D (n14, Q6);
  // U3_B: 74HC02 nor, 7 ns (gate g7)
  nor #(7) U3_B (n15, n12, Q4);
  // U4_B: 74HC11 and, 10 ns (gate g8)
  and #(10) U4_B (row0, n13, n14, n15);
  // U2_E: 74HC04 not, 7 ns (gate g9)
  not #(7) U2_E (blank_n, n12);
  // U4_C: 74HC11 and, 10 ns (gate g10)
  and #(10) U4_C (n18, Q4, n13, n14);
  // U5_A: 74HC00 nand, 7 ns (gate g11)
  nand #(7) U5_A (n19, blank_n, n18);
  // U2_F: 74HC04 not, 7 ns (gate g12)
  not #(7) U2_F (row1, n19);
  // U5_B: 74HC00 nand, 7 ns (gate g13)
  nand #(7) U5_B (n21, Q5, n14);
  // U6_A: 74HC32 or, 6 ns (gate g14)
  or #(6) U6_A (n22, n12, Q4);
  // U6_B: 74HC32 or, 6 ns (gate g15)
  or #(6) U6_B (n23, n21, n22);
  // U7_A: 74HC04 not, 7 ns (gate g16)
  not #(7) U7_A (row2, n23);
  // U5_C: 74HC00 nand, 7 ns (gate g17)
  nand #(7) U5_C (n25, Q4, Q5);
  // U6_C: 74HC32 or, 6 ns (gate g18)
  or #(6) U6_C (n26, n12, Q6);
  // U6_D: 74HC32 or, 6 ns (gate g19)
  or #(6) U6_D (n27, n25, n26);
  // U7_B: 74HC04 not, 7 ns (gate g20)
  not #(7) U7_B (row3, n27);
  // U8_A: 74HC08 and, 7 ns (gate g22)
  and #(7) U8_A (n30, n13, Q6);
  // U8_B: 74HC08 and, 7 ns (gate g23)
  and #(7) U8_B (row4, n15, n30);
  // U3_C: 74HC02 nor, 7 ns (gate g24)
  nor #(7) U3_C (n32, n12, Q5);
  // U8_C: 74HC08 and, 7 ns (gate g25)
  and #(7) U8_C (n33, Q4, Q6);
  // U8_D: 74HC08 and, 7 ns (gate g26)
  and #(7) U8_D (row5, n32, n33);
  // U7_C: 74HC04 not, 7 ns (gate g27)
  not #(7) U7_C (n35, Q4);
  // U9_A: 74HC20 nand, 8 ns (gate g28)
  nand #(8) U9_A (n36, blank_n, n35, Q5, Q6);
  // U7_D: 74HC04 not, 7 ns (gate g29)
  not #(7) U7_D (row6, n36);
  // U9_B: 74HC20 nand, 8 ns (gate g30)
  nand #(8) U9_B (n38, blank_n, Q4, Q5, Q6);
  // U5_D: 74HC00 nand, 7 ns (gate g31)
  nand #(7) U5_D (row7, n38, n38);

  // row0: active high (driven by its gate)
  // row1: active high (driven by its gate)
  // row2: active high (driven by its gate)
  // row3: active high (driven by its gate)
  // row4: active high (driven by its gate)
  // row5: active high (driven by its gate)
  // row6: active high (driven by its gate)
  // row7: active high (driven by its gate)
  assign blank = blank_n;  // blank: active low
endmodule
