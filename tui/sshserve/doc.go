// Package sshserve serves the railyard explorer over SSH, so that designers
// can open designs kept on a shared machine with a plain SSH client.
//
// The server is built from a Config (listen address, host key, authorised
// keys, the designs folder, limits) and a chain of wish middlewares, one
// concern each: logging, panic recovery, access, the session limit, the
// terminal check, and last the handler that builds a fresh model for the
// connection (a picker, an explorer on the chosen design, or a read-only
// viewer of another session).
//
// The middlewares only ever see authenticated sessions. Before them, every
// accepted connection passes a gate (pending.go) that bounds what a client
// can hold without a key: a handshake deadline, and caps on the connections
// not yet authenticated, per remote address and in all, with a policy that
// keeps the door open for others while a flood fills them.
//
// Shared viewing publishes frames, not state: the host's root model hands
// every frame it renders (its View string) to a hub, and a viewer's program
// only ever draws the latest frame it got. A viewer holds no reference to the
// host's session, so it is read-only by construction, and a slow viewer can
// never hold up the host (publishing replaces the frame and wakes waiters; it
// never blocks). The explorer also has a shared-session mode (tui.Options
// Lock, OnChange and ReadOnly); the server does not use it, so that a
// viewer's harmlessness does not rest on every key check in the explorer. The
// cost: a viewer sees the host's layout, clipped to its own window.
package sshserve
