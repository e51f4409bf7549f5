// binsynth structural model of plan 'sh-bench': 1 counter unit(s), 9 gate(s), typical delays at 5 V.
// Counting edge: falling edge of clk. The count starts from all zeros; sample the outputs just before each counting edge.
`timescale 1ns/1ps
module sh_bench (clk, convert, frame, ready, track);
  input clk;
  output convert;
  output frame;
  output ready;
  output track;
  reg Q6, Q5, Q4, Q3, Q2, Q1;
  wire n8, convert_n, n11, track_Q5lo, track_Q5hi, CLK_inv;

  // U1 unit A: 4040 12-stage binary ripple counter; counts on the falling edge of CLK, modulus 4096
  //   Q6 (pin 2) -> Q6: 505 ns after the counting edge
  //   Q5 (pin 3) -> Q5: 425 ns after the counting edge
  //   Q4 (pin 5) -> Q4: 345 ns after the counting edge
  //   Q3 (pin 6) -> Q3: 265 ns after the counting edge
  //   Q2 (pin 7) -> Q2: 185 ns after the counting edge
  //   Q1 (pin 9) -> Q1: 105 ns after the counting edge
  reg [11:0] U1_A_count, U1_A_next;
  reg U1_A_clk_was;
  initial begin
    U1_A_count = 0;
    Q6 = 1'b0;
    Q5 = 1'b0;
    Q4 = 1'b0;
    Q3 = 1'b0;
    Q2 = 1'b0;
    Q1 = 1'b0;
  end
  always @(clk) begin
    if (U1_A_clk_was === 1'b1 && clk === 1'b0) begin
      U1_A_next = (U1_A_count == 4095) ? 12'd0 : U1_A_count + 12'd1;
      if (U1_A_next[5] != U1_A_count[5]) Q6 <= #(505) U1_A_next[5];
      if (U1_A_next[4] != U1_A_count[4]) Q5 <= #(425) U1_A_next[4];
      if (U1_A_next[3] != U1_A_count[3]) Q4 <= #(345) U1_A_next[3];
      if (U1_A_next[2] != U1_A_count[2]) Q3 <= #(265) U1_A_next[2];
      if (U1_A_next[1] != U1_A_count[1]) Q2 <= #(185) U1_A_next[1];
      if (U1_A_next[0] != U1_A_count[0]) Q1 <= #(105) U1_A_next[0];
      U1_A_count = U1_A_next;
    end
    U1_A_clk_was = clk;
  end

  // decode logic: one primitive per physical gate, named chip_unit
  // U2_A: 4001 nor, 120 ns (gate g1)
  nor #(120) U2_A (n8, Q2, Q6);
  // U3_A: 4012 nand, 160 ns (gate g2)
  nand #(160) U3_A (convert_n, Q3, Q4, Q5, n8);
  // U4_A: 4078 nor, 200 ns (gate g3)
  nor #(200) U4_A (frame, Q1, Q2, Q3, Q4, Q5, Q6, CLK_inv, 1'b0);
  // U2_B: 4001 nor, 120 ns (gate g4)
  nor #(120) U2_B (n11, Q4, Q5);
  // U3_B: 4012 nand, 160 ns (gate g5)
  nand #(160) U3_B (track_Q5lo, Q6, Q6, Q6, Q6);
  // U2_C: 4001 nor, 120 ns (gate g6)
  nor #(120) U2_C (ready, n11, track_Q5lo);
  // U2_D: 4001 nor, 120 ns (gate g7)
  nor #(120) U2_D (track_Q5hi, Q4, Q6);
  // U6_B: 4053 mux, 275 ns (gate sw1)
  assign #(275) track = (Q5 == 0) ? track_Q5lo : track_Q5hi;
  // U5_A: 4069 not, 55 ns (gate strobe_clock_inv)
  not #(55) U5_A (CLK_inv, clk);

  assign convert = convert_n;  // convert: active low
  // frame: active high (driven by its gate)
  // ready: active high (driven by its gate)
  // track: active high (driven by its gate)

  // switch sh_in: U6 (4053) section A, control track; common joins dut_out while the control is high
  wire sh_in_on = track ? 1'b1 : 1'b0;  // 1 while it joins dut_out
endmodule
