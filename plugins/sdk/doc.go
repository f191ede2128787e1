// Package sdk is what a phasebound backend is built with: Serve on the backend side, Host on the server side, and the standard backends, with go-plugin and the wire protocol hidden inside.
package sdk
