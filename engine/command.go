package engine

// Command is one edit of a project. Apply changes the project and returns the
// command that undoes it, so undo and redo are unlimited and exact. A command
// that fails leaves the project unchanged.
type Command interface {
	Apply(p *Project) (inverse Command, err error)
	// Describe names the edit for the Undo/Redo menu items: "Change probability".
	Describe() string
}
