// binsynth structural model of plan 'adc-staircase': 1 counter unit(s), 11 gate(s), typical delays at 5 V.
// Counting edge: falling edge of clk. The count starts from all zeros; sample the outputs just before each counting edge.
// clk is made on the board by an RC oscillator (40106 U2, nominal 11905.6 Hz); it stays an input here: drive it from the testbench.
`timescale 1ns/1ps
module adc_staircase (clk, sweep, convert, frame);
  input clk;
  output sweep;
  output convert;
  output frame;
  reg Q6, Q5, Q7, Q4, Q3, Q2, Q1;
  wire n9, convert_n, n11, n12, n13, n14, n15, n16, n17, frame_Q7lo;

  // U1 unit A: 4040 12-stage binary ripple counter; counts on the falling edge of CLK, modulus 4096
  //   Q6 (pin 2) -> Q6: 505 ns after the counting edge
  //   Q5 (pin 3) -> Q5: 425 ns after the counting edge
  //   Q7 (pin 4) -> Q7: 585 ns after the counting edge
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
    Q7 = 1'b0;
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
      if (U1_A_next[6] != U1_A_count[6]) Q7 <= #(585) U1_A_next[6];
      if (U1_A_next[3] != U1_A_count[3]) Q4 <= #(345) U1_A_next[3];
      if (U1_A_next[2] != U1_A_count[2]) Q3 <= #(265) U1_A_next[2];
      if (U1_A_next[1] != U1_A_count[1]) Q2 <= #(185) U1_A_next[1];
      if (U1_A_next[0] != U1_A_count[0]) Q1 <= #(105) U1_A_next[0];
      U1_A_count = U1_A_next;
    end
    U1_A_clk_was = clk;
  end

  // decode logic: one primitive per physical gate, named chip_unit
  // U2_A: 40106 not, 90 ns (gate g1)
  not #(90) U2_A (n9, Q2);
  // U3_A: 4011 nand, 55 ns (gate g2)
  nand #(55) U3_A (convert_n, Q1, n9);
  // U2_B: 40106 not, 90 ns (gate g3)
  not #(90) U2_B (n11, Q3);
  // U3_B: 4011 nand, 55 ns (gate g4)
  nand #(55) U3_B (n12, Q4, Q4);
  // U3_C: 4011 nand, 55 ns (gate g5)
  nand #(55) U3_C (n13, Q5, Q5);
  // U3_D: 4011 nand, 55 ns (gate g6)
  nand #(55) U3_D (n14, Q6, Q6);
  // U4_A: 4081 and, 160 ns (gate g7)
  and #(160) U4_A (n15, n11, n12);
  // U4_B: 4081 and, 160 ns (gate g8)
  and #(160) U4_B (n16, n13, n14);
  // U4_C: 4081 and, 160 ns (gate g9)
  and #(160) U4_C (n17, n15, n16);
  // U4_D: 4081 and, 160 ns (gate g10)
  and #(160) U4_D (frame_Q7lo, n9, n17);
  // U5_B: 4053 mux, 275 ns (gate sw1)
  assign #(275) frame = (Q7 == 0) ? frame_Q7lo : 1'b0;

  assign sweep = Q7;  // sweep: active low
  assign convert = convert_n;  // convert: active low
  // frame: active high (driven by its gate)

  // staircase ramp: r-2r ladder on Q3 (tick bit 2), Q4 (tick bit 3), Q5 (tick bit 4), Q6 (tick bit 5); volts at 5 V with the drivers' 1140 ohm
  real ramp;
  always @(Q3 or Q4 or Q5 or Q6)
    case ({Q6, Q5, Q4, Q3})
      4'd0: ramp = 0.000000;
      4'd1: ramp = 0.314459;
      4'd2: ramp = 0.627145;
      4'd3: ramp = 0.941603;
      4'd4: ramp = 1.249869;
      4'd5: ramp = 1.564328;
      4'd6: ramp = 1.877014;
      4'd7: ramp = 2.191473;
      4'd8: ramp = 2.490484;
      4'd9: ramp = 2.804943;
      4'd10: ramp = 3.117629;
      4'd11: ramp = 3.432087;
      4'd12: ramp = 3.740353;
      4'd13: ramp = 4.054812;
      4'd14: ramp = 4.367498;
      4'd15: ramp = 4.681957;
      default: ramp = 0.0;  // a bit still unknown (x) before the count starts
    endcase

  // switch adc_in: U5 (4053) section A, control Q7; common joins GND while the control is high
  wire adc_in_on = Q7 ? 1'b0 : 1'b1;  // 1 while it joins ramp
  real adc_in;  // the common terminal's volts
  always @* adc_in = adc_in_on ? ramp : 0.0;
endmodule
