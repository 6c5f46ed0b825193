package broker_test

import (
	"fmt"

	"undercurrent/ingest/broker"
)

func ExampleDataSubject() {
	fmt.Println(broker.DataSubject("fenwick-lane", "fl-w1"))
	fmt.Println(broker.EstimateSubject("fenwick-lane"))
	fmt.Println(broker.AlarmSubject("fenwick-lane", "imbalance"))
	fmt.Println(broker.DeadLetterSubject(broker.ReasonOutOfOrder))
	asset, sensor, _ := broker.ParseDataSubject("uc.data.kestrel-moor.km-a")
	fmt.Println(asset, sensor)
	// Output:
	// uc.data.fenwick-lane.fl-w1
	// uc.est.fenwick-lane
	// uc.alarm.fenwick-lane.imbalance
	// uc.dlq.out-of-order
	// kestrel-moor km-a
}
