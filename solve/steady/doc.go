// Package steady finds steady states of ODE systems y' = f(y) whose
// solutions keep some linear combinations of y constant (conservation
// laws), classifies their stability from the eigenvalues of the Jacobian
// reduced by those laws, follows them as one parameter changes
// (pseudo-arclength continuation with fold and Hopf points located), fits
// Hill curves to dose–response data, and computes metabolic control
// coefficients by the matrix method.
//
// The package is generic: it knows nothing of reaction networks. A network
// compiled by package network satisfies solve.System; its conservation
// laws and held species become Settings.Laws.
package steady
