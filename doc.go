// Package riskmodel turns a raw panel of daily stock returns into a validated
// covariance forecast for portfolio construction and risk attribution.
//
// This file is a placeholder overview; see the README.
package riskmodel
