package doe

// boxBehnkenBlocks lists, for each number of factors, the blocks of factors
// (numbered from 1) that are varied together over a two-level factorial
// while the others stay at 0. They come from Box & Behnken (1960), "Some new
// three level designs for the study of quantitative variables",
// Technometrics 2:
//   - k = 3, 4, 5: every pair of factors (a balanced incomplete block design
//     with blocks of 2), in lexicographic order as in the NIST/SEMATECH
//     e-Handbook table for k = 3;
//   - k = 6: six blocks of 3 factors from a partially balanced design, each
//     factor in 3 blocks, each pair in one or two blocks;
//   - k = 7: the seven blocks of 3 of a balanced incomplete block design
//     (the Fano plane), each pair of factors in exactly one block.
var boxBehnkenBlocks = map[int][][]int{
	3: {{1, 2}, {1, 3}, {2, 3}},
	4: {{1, 2}, {1, 3}, {1, 4}, {2, 3}, {2, 4}, {3, 4}},
	5: {{1, 2}, {1, 3}, {1, 4}, {1, 5}, {2, 3}, {2, 4}, {2, 5}, {3, 4}, {3, 5}, {4, 5}},
	6: {{1, 2, 4}, {2, 3, 5}, {3, 4, 6}, {1, 4, 5}, {2, 5, 6}, {1, 3, 6}},
	7: {{4, 5, 6}, {1, 6, 7}, {2, 5, 7}, {1, 2, 4}, {3, 4, 7}, {1, 3, 5}, {2, 3, 6}},
}

// BoxBehnkenCoded returns the Box–Behnken design for k = 3..7 factors in
// coded units −1, 0, +1 (Box & Behnken 1960, "Some new three level designs
// for the study of quantitative variables", Technometrics 2; NIST/SEMATECH
// e-Handbook of Statistical Methods §5.3.3.6.2). For each block of factors
// (see the table in the source), the block's factors run through a full
// two-level factorial in standard order, the first factor of the block
// changing fastest, with the other factors at 0; then come centre
// replicates. No run sits at a corner of the cube. The run count is
//
//	k:      3   4   5   6   7
//	runs:  12  24  40  48  56   (+ centre)
//
// For k = 3 the order is the handbook's. It panics if k is outside 3..7 or
// centre < 0.
func BoxBehnkenCoded(k, centre int) [][]float64 {
	blocks, ok := boxBehnkenBlocks[k]
	if !ok {
		panic("doe: Box-Behnken design needs 3 to 7 factors")
	}
	if centre < 0 {
		panic("doe: negative number of centre runs")
	}
	var runs [][]float64
	for _, b := range blocks {
		for r := range 1 << len(b) {
			p := make([]float64, k)
			for i, f := range b {
				if r>>i&1 == 1 {
					p[f-1] = 1
				} else {
					p[f-1] = -1
				}
			}
			runs = append(runs, p)
		}
	}
	for range centre {
		runs = append(runs, make([]float64, k))
	}
	return runs
}

// BoxBehnken returns the design of BoxBehnkenCoded in the unit cube,
// u = (c + 1)/2: levels 0, ½ and 1, in the same run order.
//
// It panics if k is outside 3..7 or centre < 0.
func BoxBehnken(k, centre int) [][]float64 {
	return codedToUnit(BoxBehnkenCoded(k, centre), 1)
}
