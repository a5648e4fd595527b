// Package sshserve serves the railyard explorer over SSH, so that designers
// can open designs kept on a shared machine with a plain SSH client. It sits
// under tui/ because it is the explorer served: the top level of the
// repository is fixed, and the server is one more way to run package tui.
//
// The server is built from a Config (listen address, host key, authorised
// keys, the designs folder, the traces folder, limits) and a chain of wish
// middlewares, one concern each: logging, panic recovery, access, the
// session limit, the terminal check, and last the handler that builds a
// fresh model for the connection (a picker, an explorer on the chosen
// design, or a read-only viewer of another session). A Config the server
// cannot take is a ConfigError naming the field, which a command maps to
// its own flag.
//
// The middlewares only ever see authenticated sessions. Before them, every
// accepted connection passes a gate (pending.go) that bounds what a client
// can hold without a key: a handshake deadline, and caps on the connections
// not yet authenticated, per remote address and in all, with a policy that
// keeps the door open for others while a flood fills them.
//
// Files are written only where the server says (saves.go): the explorer is
// given tui.Options.Save, so its save key asks only whether to save the
// trace or a VCD, never for a path, and the file goes to Traces/USER/ under
// a name the server chooses. At its end a session's whole trace is kept
// there too.
//
// What a session writes is bounded. Its trace streams to a spool in
// Traces/USER (the disk its saves take; the spool has no name once open and
// is closed when the session ends) under Config.MaxTrace; when the cap is
// reached the host model sends the explorer a tui.Notice, which says so on
// the status line and marks the header, and logs it once. A VCD, written
// from the history when saved, is refused past Config.MaxWave. Close and
// Shutdown wait for the sessions' last saves, so a stopped server leaves no
// file half written.
//
// Shared viewing publishes frames, not state: the host's root model hands
// every frame it renders (its View string) to a hub, and a viewer's program
// only ever draws the latest frame it got. A viewer holds no reference to
// the host's session, so it is read-only by construction (it cannot save
// either), and a slow viewer can never hold up the host (publishing replaces
// the frame and wakes waiters; it never blocks). The cost: a viewer sees the
// host's layout, clipped to its own window.
//
// Every string the server shows or logs that a client or a file chose (user
// names, commands, design file names, a design's errors) goes through
// diag.Printable first.
package sshserve
