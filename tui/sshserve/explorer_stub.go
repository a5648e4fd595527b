package sshserve

import (
	"errors"

	tea "github.com/charmbracelet/bubbletea"
)

// Placeholders until the explorer and the demo list land; explorer.go replaces them.
func openExplorer(ExplorerRequest) (tea.Model, error) { return nil, errors.New("no explorer") }
func demoNames() []string                             { return nil }
