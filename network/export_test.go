package network

// DenseConservationLaws is the earlier dense method, for the comparison
// of laws_external_test.go.
var DenseConservationLaws = denseConservationLaws
