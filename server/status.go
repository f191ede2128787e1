package server

import (
	"errors"
	"fmt"
	"strings"

	"google.golang.org/genproto/googleapis/rpc/errdetails"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/status"

	"github.com/phasebound/phasebound/plugins/sdk"
)

// maxViolations bounds the field violations one error carries; a batch of
// millions of bad points is summarised after this many.
const maxViolations = 100

// violation is one bad request field.
type violation struct {
	field, description string
}

// badRequest builds a status with code c and a BadRequest detail listing
// the violations. The message is the first violation's description (plus a
// count when there are more), so that a command line can print it as is.
func badRequest(c codes.Code, vs ...violation) error {
	return badRequestN(c, len(vs), vs)
}

// badRequestN is badRequest for total bad fields of which vs lists the
// first few.
func badRequestN(c codes.Code, total int, vs []violation) error {
	msg := vs[0].description
	if total > 1 {
		msg = fmt.Sprintf("%s (and %d more bad points)", msg, total-1)
	}
	st := status.New(c, msg)
	br := &errdetails.BadRequest{}
	for i, v := range vs {
		if i == maxViolations {
			break
		}
		br.FieldViolations = append(br.FieldViolations, &errdetails.BadRequest_FieldViolation{Field: v.field, Description: v.description})
	}
	if total > maxViolations {
		br.FieldViolations = append(br.FieldViolations, &errdetails.BadRequest_FieldViolation{
			Field: "values", Description: fmt.Sprintf("%d more bad points not listed", total-maxViolations),
		})
	}
	if d, err := st.WithDetails(br); err == nil {
		st = d
	}
	return st.Err()
}

// invalidField is InvalidArgument naming one field.
func invalidField(field, format string, args ...any) error {
	return badRequest(codes.InvalidArgument, violation{field, fmt.Sprintf(format, args...)})
}

// tooManyPoints refuses a request above the point limit.
func tooManyPoints(n, limit int) error {
	st := status.New(codes.ResourceExhausted, fmt.Sprintf("request has %d points, more than the limit of %d per request; split it, or use EvaluateStream", n, limit))
	if d, err := st.WithDetails(&errdetails.QuotaFailure{Violations: []*errdetails.QuotaFailure_Violation{{
		Subject: "points per request", Description: fmt.Sprintf("%d > %d", n, limit),
	}}}); err == nil {
		st = d
	}
	return st.Err()
}

// backendStatus turns a backend failure into a status: UNAVAILABLE when the
// backend process is gone or restarting (the call may be retried),
// INTERNAL otherwise.
func backendStatus(err error) error {
	if errors.Is(err, sdk.ErrBackendUnavailable) {
		return status.Errorf(codes.Unavailable, "backend unavailable, retry: %v", err)
	}
	var se *sdk.SetupError
	if errors.As(err, &se) {
		return status.Errorf(codes.FailedPrecondition, "%v", err)
	}
	if s, ok := status.FromError(err); ok {
		return s.Err()
	}
	return status.Errorf(codes.Internal, "%v", err)
}

// substance returns the substance id, or InvalidArgument naming the valid
// ids.
func (snap *snapshot) substance(id string) (*substance, error) {
	if sub, ok := snap.byID[id]; ok {
		return sub, nil
	}
	if id == "" {
		return nil, invalidField("substance", "no substance given (valid: %s)", strings.Join(snap.sortedIDs(), ", "))
	}
	return nil, invalidField("substance", "unknown substance %q (valid: %s)", id, strings.Join(snap.sortedIDs(), ", "))
}
