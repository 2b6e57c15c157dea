/**
 * Tree-sitter grammar for guardband's `.guard` spec files.
 *
 * It follows the language reference (crates/guardband-syntax/REFERENCE.md)
 * and is held to the real parser by tests/tree_sitter.rs: every example and
 * fixture that the checker parses without a syntax error parses here
 * without an error node, and every file with a syntax error has one.
 *
 * A unit is written after its number on the same line (`2.2 uF`), unless
 * that word starts the next field (`ratio = 5000  threshold = ...`): the
 * external scanner (src/scanner.c) decides, looking past the word.
 */

const PREC = {
  range: 1,
  sum: 2,
  product: 3,
  tolerance: 4,
  unary: 5,
  call: 6,
};

module.exports = grammar({
  name: 'guard',

  externals: $ => [$.unit, $._error_sentinel],

  extras: $ => [/[ \t\r\n\f\uFEFF]/, $.comment],

  word: $ => $.identifier,

  rules: {
    source_file: $ => repeat(choice($.use, $.block)),

    use: $ => seq('use', field('path', $.string)),

    block: $ => seq(
      field('keyword', $.identifier),
      optional(field('name', $.identifier)),
      field('body', $.body),
    ),

    body: $ => seq('{', repeat(choice($.field, $.block)), '}'),

    field: $ => seq(
      field('key', $.identifier),
      optional(field('name', $.identifier)),
      field('relation', $.relation),
      field('value', $._expression),
    ),

    relation: _ => choice('=', '<=', '>=', '<', '>'),

    _expression: $ => choice($.range, $._sum),

    range: $ => prec(PREC.range, seq(field('low', $._sum), '..', field('high', $._sum))),

    _sum: $ => choice($.binary, $._toleranced),

    binary: $ => choice(
      prec.left(PREC.sum, seq($._sum, choice('+', '-'), $._sum)),
      prec.left(PREC.product, seq($._sum, choice('*', '/'), $._sum)),
    ),

    _toleranced: $ => choice($.tolerance, $._unary),

    tolerance: $ => prec.left(PREC.tolerance, seq(
      field('value', $._unary),
      choice('±', '+/-'),
      field('spread', $._unary),
      optional($.confidence),
    )),

    confidence: $ => seq('at', $.number),

    _unary: $ => choice($.negation, $.spread, $._atom),

    negation: $ => prec(PREC.unary, seq('-', $._unary)),

    spread: $ => prec.right(PREC.unary, seq(choice('±', '+/-'), $._atom, optional($.confidence))),

    _atom: $ => choice(
      $.number,
      $.boolean,
      $.string,
      $.call,
      $.path,
      $.parenthesized,
    ),

    number: $ => seq(field('digits', $.digits), optional(field('unit', $.unit))),

    digits: _ => /[0-9]+(\.[0-9]+)?([eE][+-]?[0-9]+)?/,

    boolean: _ => choice('true', 'false'),

    string: _ => /"[^"\r\n]*"/,

    call: $ => prec(PREC.call, seq(
      field('function', $.path),
      '(',
      optional(seq($._expression, repeat(seq(',', $._expression)))),
      ')',
    )),

    path: $ => prec.left(seq($.identifier, repeat(seq('.', $.identifier)))),

    parenthesized: $ => seq('(', $._expression, ')'),

    identifier: _ => /[A-Za-z_][A-Za-z0-9_]*/,

    comment: _ => token(seq('//', /[^\r\n]*/)),
  },
});
