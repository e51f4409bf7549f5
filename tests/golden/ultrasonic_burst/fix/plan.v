// binsynth structural model of plan 'us-burst': 1 counter unit(s), 19 gate(s), typical delays at 10 V.
// Counting edge: falling edge of clk. The count starts from all zeros; sample the outputs just before each counting edge.
`timescale 1ns/1ps
module us_burst (clk, burst, blank, listen);
  input clk;
  output burst;
  output blank;
  output listen;
  reg Q6, Q5, Q7, Q4, Q3, Q2, Q1, Q9, Q8, Q10;
  wire n12, n13, n14, n15, n16, n17, n19, n20, n21, n22, n25, n26, n27, n28, n29, blank_n;

  // U1 unit A: 4040 12-stage binary ripple counter; counts on the falling edge of CLK, modulus 4096
  //   Q6 (pin 2) -> Q6: 195 ns after the counting edge
  //   Q5 (pin 3) -> Q5: 165 ns after the counting edge
  //   Q7 (pin 4) -> Q7: 225 ns after the counting edge
  //   Q4 (pin 5) -> Q4: 135 ns after the counting edge
  //   Q3 (pin 6) -> Q3: 105 ns after the counting edge
  //   Q2 (pin 7) -> Q2: 75 ns after the counting edge
  //   Q1 (pin 9) -> Q1: 45 ns after the counting edge
  //   Q9 (pin 12) -> Q9: 285 ns after the counting edge
  //   Q8 (pin 13) -> Q8: 255 ns after the counting edge
  //   Q10 (pin 14) -> Q10: 315 ns after the counting edge
  reg [11:0] U1_A_count, U1_A_next;
  reg U1_A_clk_was;
  initial begin
    U1_A_count = 0;
    Q6 = 1'b0;
    Q5 = 1'b0;
    Q7 = 1'b0;
    Q4 = 1'b0;
    Q3 = 1'b0;
    Q2 = 1'b0;
    Q1 = 1'b0;
    Q9 = 1'b0;
    Q8 = 1'b0;
    Q10 = 1'b0;
  end
  always @(clk) begin
    if (U1_A_clk_was === 1'b1 && clk === 1'b0) begin
      U1_A_next = (U1_A_count == 4095) ? 12'd0 : U1_A_count + 12'd1;
      if (U1_A_next[5] != U1_A_count[5]) Q6 <= #(195) U1_A_next[5];
      if (U1_A_next[4] != U1_A_count[4]) Q5 <= #(165) U1_A_next[4];
      if (U1_A_next[6] != U1_A_count[6]) Q7 <= #(225) U1_A_next[6];
      if (U1_A_next[3] != U1_A_count[3]) Q4 <= #(135) U1_A_next[3];
      if (U1_A_next[2] != U1_A_count[2]) Q3 <= #(105) U1_A_next[2];
      if (U1_A_next[1] != U1_A_count[1]) Q2 <= #(75) U1_A_next[1];
      if (U1_A_next[0] != U1_A_count[0]) Q1 <= #(45) U1_A_next[0];
      if (U1_A_next[8] != U1_A_count[8]) Q9 <= #(285) U1_A_next[8];
      if (U1_A_next[7] != U1_A_count[7]) Q8 <= #(255) U1_A_next[7];
      if (U1_A_next[9] != U1_A_count[9]) Q10 <= #(315) U1_A_next[9];
      U1_A_count = U1_A_next;
    end
    U1_A_clk_was = clk;
  end

  // decode logic: one primitive per physical gate, named chip_unit
  // U2_A: 4069 not, 30 ns (gate g1)
  not #(30) U2_A (n12, Q7);
  // U2_B: 4069 not, 30 ns (gate g2)
  not #(30) U2_B (n13, Q8);
  // U2_C: 4069 not, 30 ns (gate g3)
  not #(30) U2_C (n14, Q9);
  // U2_D: 4069 not, 30 ns (gate g4)
  not #(30) U2_D (n15, Q10);
  // U3_A: 4071 or, 40 ns (gate g5)
  or #(40) U3_A (n16, Q5, Q6);
  // U4_A: 4012 nand, 65 ns (gate g6)
  nand #(65) U4_A (n17, n12, n13, n14, n15);
  // U5_A: 4001 nor, 50 ns (gate g7)
  nor #(50) U5_A (burst, n16, n17);
  // U5_B: 4001 nor, 50 ns (gate g8)
  nor #(50) U5_B (n19, Q4, Q5);
  // U2_E: 4069 not, 30 ns (gate g9)
  not #(30) U2_E (n20, Q6);
  // U3_B: 4071 or, 40 ns (gate g10)
  or #(40) U3_B (n21, n19, n20);
  // U6_A: 4002 nor, 65 ns (gate g11)
  nor #(65) U6_A (n22, Q7, Q8, Q9, Q10);
  // U7_A: 4081 and, 65 ns (gate g12)
  and #(65) U7_A (blank, n21, n22);
  // U4_B: 4012 nand, 65 ns (gate g14)
  nand #(65) U4_B (n25, Q7, Q8, Q9, Q10);
  // U5_C: 4001 nor, 50 ns (gate g15)
  nor #(50) U5_C (n26, n21, n25);
  // U7_B: 4081 and, 65 ns (gate g16)
  and #(65) U7_B (n27, Q5, Q6);
  // U6_B: 4002 nor, 65 ns (gate g17)
  nor #(65) U6_B (n28, n27, Q7, Q8, Q9);
  // U7_C: 4081 and, 65 ns (gate g18)
  and #(65) U7_C (n29, n15, n28);
  // U5_D: 4001 nor, 50 ns (gate g19)
  nor #(50) U5_D (listen, n26, n29);
  // U2_F: 4069 not, 30 ns (gate inv_rx_short)
  not #(30) U2_F (blank_n, blank);

  // burst: active high (driven by its gate)
  // blank: active high (driven by its gate)
  // listen: active high (driven by its gate)

  // switch rx_short: U8 (4066) section A, control blank; common joins GND while the control is high
  wire rx_short_on = blank ? 1'b1 : 1'b0;  // 1 while it joins GND
endmodule
