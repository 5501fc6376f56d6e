package netlist

import (
	"reflect"

	"github.com/alecthomas/participle/v2/lexer"
)

// tokenSlice is the type of the Tokens fields participle fills.
var tokenSlice = reflect.TypeOf([]lexer.Token(nil))

// compactTokens replaces every Tokens field in the tree under v (an
// expression's, a require statement's) by a fresh slice holding only its
// last significant token, the one thing read from it (tokensEnd, for
// spans). Participle's Tokens are windows into the whole line's token
// array, so keeping them would keep every line's tokens (spaces included)
// alive for the life of the File: most of a parsed file's memory.
func compactTokens(v reflect.Value) {
	switch v.Kind() {
	case reflect.Pointer, reflect.Interface:
		if !v.IsNil() {
			compactTokens(v.Elem())
		}
	case reflect.Slice:
		if v.Type() == tokenSlice {
			toks := v.Interface().([]lexer.Token)
			var last []lexer.Token
			for i := len(toks) - 1; i >= 0; i-- {
				if t := toks[i]; t.Type != symSpace && t.Type != symComment && !t.EOF() {
					last = []lexer.Token{t}
					break
				}
			}
			if v.CanSet() {
				v.Set(reflect.ValueOf(last))
			}
			return
		}
		for i := range v.Len() {
			compactTokens(v.Index(i))
		}
	case reflect.Struct:
		for i := range v.NumField() {
			if v.Type().Field(i).IsExported() {
				compactTokens(v.Field(i))
			}
		}
	}
}
