// binsynth structural model of plan 'stepper-exerciser': 1 counter unit(s), 17 gate(s), typical delays at 5 V.
// Counting edge: falling edge of clk. The count starts from all zeros; sample the outputs just before each counting edge.
`timescale 1ns/1ps
module stepper_exerciser (clk, phase_a, phase_b, phase_c, phase_d, index);
  input clk;
  output phase_a;
  output phase_b;
  output phase_c;
  output phase_d;
  output index;
  reg n_1Q0, n_1Q1, n_1Q2, n_1Q3;
  wire n6, n7, n8, n10, n11, n12, n14, n16, n18, n19, n20, n21, index_n;

  // U1 unit A: 74HC393 dual 4-bit binary ripple counter; counts on the falling edge of CLK, modulus 16
  //   1Q0 (pin 3) -> 1Q0: 12 ns after the counting edge
  //   1Q1 (pin 4) -> 1Q1: 17 ns after the counting edge
  //   1Q2 (pin 5) -> 1Q2: 22 ns after the counting edge
  //   1Q3 (pin 6) -> 1Q3: 27 ns after the counting edge
  reg [3:0] U1_A_count, U1_A_next;
  reg U1_A_clk_was;
  initial begin
    U1_A_count = 0;
    n_1Q0 = 1'b0;
    n_1Q1 = 1'b0;
    n_1Q2 = 1'b0;
    n_1Q3 = 1'b0;
  end
  always @(clk) begin
    if (U1_A_clk_was === 1'b1 && clk === 1'b0) begin
      U1_A_next = (U1_A_count == 15) ? 4'd0 : U1_A_count + 4'd1;
      if (U1_A_next[0] != U1_A_count[0]) n_1Q0 <= #(12) U1_A_next[0];
      if (U1_A_next[1] != U1_A_count[1]) n_1Q1 <= #(17) U1_A_next[1];
      if (U1_A_next[2] != U1_A_count[2]) n_1Q2 <= #(22) U1_A_next[2];
      if (U1_A_next[3] != U1_A_count[3]) n_1Q3 <= #(27) U1_A_next[3];
      U1_A_count = U1_A_next;
    end
    U1_A_clk_was = clk;
  end

  // decode logic: one primitive per physical gate, named chip_unit
  // U2_A: 74HC00 nand, 7 ns (gate g1)
  nand #(7) U2_A (n6, n_1Q0, n_1Q1);
  // U3_A: 74HC04 not, 7 ns (gate g2)
  not #(7) U3_A (n7, n_1Q3);
  // U2_B: 74HC00 nand, 7 ns (gate g3)
  nand #(7) U2_B (n8, n6, n7);
  // U4_A: 74HC02 nor, 7 ns (gate g4)
  nor #(7) U4_A (phase_a, n_1Q2, n8);
  // U2_C: 74HC00 nand, 7 ns (gate g5)
  nand #(7) U2_C (n10, n_1Q2, n7);
  // U3_B: 74HC04 not, 7 ns (gate g6)
  not #(7) U3_B (n11, n10);
  // U2_D: 74HC00 nand, 7 ns (gate g7)
  nand #(7) U2_D (n12, n6, n11);
  // U3_C: 74HC04 not, 7 ns (gate g8)
  not #(7) U3_C (phase_b, n12);
  // U5_A: 74HC00 nand, 7 ns (gate g9)
  nand #(7) U5_A (n14, n6, n_1Q3);
  // U4_B: 74HC02 nor, 7 ns (gate g10)
  nor #(7) U4_B (phase_c, n_1Q2, n14);
  // U5_B: 74HC00 nand, 7 ns (gate g11)
  nand #(7) U5_B (n16, n6, n_1Q2);
  // U4_C: 74HC02 nor, 7 ns (gate g12)
  nor #(7) U4_C (phase_d, n7, n16);
  // U3_D: 74HC04 not, 7 ns (gate g13)
  not #(7) U3_D (n18, n_1Q0);
  // U4_D: 74HC02 nor, 7 ns (gate g14)
  nor #(7) U4_D (n19, n_1Q1, n_1Q2);
  // U5_C: 74HC00 nand, 7 ns (gate g15)
  nand #(7) U5_C (n20, n18, n7);
  // U3_E: 74HC04 not, 7 ns (gate g16)
  not #(7) U3_E (n21, n20);
  // U5_D: 74HC00 nand, 7 ns (gate g17)
  nand #(7) U5_D (index_n, n19, n21);

  // phase_a: active high (driven by its gate)
  // phase_b: active high (driven by its gate)
  // phase_c: active high (driven by its gate)
  // phase_d: active high (driven by its gate)
  assign index = index_n;  // index: active low
endmodule
