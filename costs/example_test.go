package costs_test

import (
	"fmt"

	"fixpoint/costs"
)

func ExampleDiscountFactor() {
	g, _ := costs.DiscountFactor(0.05, 0.5) // 5% a year, half-year periods
	fmt.Printf("%.6f\n", g)
	// Output: 0.975900
}

func ExampleCapitalRecovery() {
	// A 10,000 overhaul financed over 5 years at 10%: level end-of-year payment.
	fmt.Printf("%.2f\n", 10000*costs.CapitalRecovery(0.10, 5))
	// Output: 2637.97
}
