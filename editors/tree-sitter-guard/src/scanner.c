// The one context-sensitive token of `.guard`: the unit after a number.
// A word on the same line after a number is its unit (`2.2 uF`,
// `30 mA/um^2`, `150 ppm/K`), unless the word is followed by `=`, `{`, `<`
// or `>` (then it is the next field's key: `ratio = 5000  threshold = ...`)
// or is `true`, `false` or `use`. This mirrors `lex_number` in
// crates/guardband-syntax/src/lexer.rs.

#include "tree_sitter/parser.h"

#include <stdbool.h>
#include <stdint.h>
#include <string.h>

enum TokenType { UNIT, ERROR_SENTINEL };

void *tree_sitter_guard_external_scanner_create(void) { return NULL; }
void tree_sitter_guard_external_scanner_destroy(void *payload) { (void)payload; }
unsigned tree_sitter_guard_external_scanner_serialize(void *payload, char *buffer) {
    (void)payload;
    (void)buffer;
    return 0;
}
void tree_sitter_guard_external_scanner_deserialize(void *payload, const char *buffer,
                                                    unsigned length) {
    (void)payload;
    (void)buffer;
    (void)length;
}

static bool is_unit_start(int32_t c) {
    return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || c == 0xB5 /* µ */ ||
           c == 0x3BC /* μ */ || c == 0x3A9 /* Ω */ || c == 0xB0 /* ° */ || c == '%';
}

static bool is_unit_continue(int32_t c) {
    return is_unit_start(c) || (c >= '0' && c <= '9') || c == '_';
}

static bool is_digit(int32_t c) { return c >= '0' && c <= '9'; }

bool tree_sitter_guard_external_scanner_scan(void *payload, TSLexer *lexer,
                                             const bool *valid_symbols) {
    (void)payload;
    // In error recovery every symbol is valid: take no unit there.
    if (valid_symbols[ERROR_SENTINEL] || !valid_symbols[UNIT]) {
        return false;
    }
    while (lexer->lookahead == ' ' || lexer->lookahead == '\t') {
        lexer->advance(lexer, true);
    }
    if (!is_unit_start(lexer->lookahead)) {
        return false;
    }
    // The word, for the `true` / `false` / `use` check (ASCII only).
    char word[8];
    unsigned word_len = 0;
    bool plain = true;
    for (;;) {
        int32_t c = lexer->lookahead;
        if (is_unit_continue(c)) {
            if (plain && word_len < sizeof word - 1 && c < 128) {
                word[word_len++] = (char)c;
            } else {
                plain = false;
            }
            lexer->advance(lexer, false);
            lexer->mark_end(lexer);
        } else if (c == '*' || c == '/' || c == 0xB7 /* · */) {
            plain = false;
            lexer->advance(lexer, false);
            if (!is_unit_start(lexer->lookahead)) {
                // `mA*` or `V //`: the unit ends before the operator.
                lexer->result_symbol = UNIT;
                return true;
            }
        } else if (c == '^') {
            plain = false;
            lexer->advance(lexer, false);
            if (lexer->lookahead == '-') {
                lexer->advance(lexer, false);
            }
            if (!is_digit(lexer->lookahead)) {
                lexer->result_symbol = UNIT;
                return true;
            }
            while (is_digit(lexer->lookahead)) {
                lexer->advance(lexer, false);
            }
            lexer->mark_end(lexer);
        } else {
            break;
        }
    }
    word[word_len] = '\0';
    if (plain && (strcmp(word, "true") == 0 || strcmp(word, "false") == 0 ||
                  strcmp(word, "use") == 0)) {
        return false;
    }
    while (lexer->lookahead == ' ' || lexer->lookahead == '\t') {
        lexer->advance(lexer, false);
    }
    int32_t follow = lexer->lookahead;
    if (follow == '{' || follow == '<' || follow == '>') {
        return false;
    }
    if (follow == '=') {
        lexer->advance(lexer, false);
        if (lexer->lookahead != '=') {
            return false;
        }
    }
    lexer->result_symbol = UNIT;
    return true;
}
