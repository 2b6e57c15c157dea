; Highlights for `.guard` files.

(comment) @comment
(string) @string
(boolean) @constant.builtin.boolean
(digits) @constant.numeric
(unit) @type
"use" @keyword.control.import
"at" @keyword

(block keyword: (identifier) @keyword)
(block name: (identifier) @namespace)
(field key: (identifier) @property)
(field name: (identifier) @variable.parameter)
(call function: (path (identifier) @function))
(path (identifier) @variable)

(relation) @operator
["+" "-" "*" "/" "±" "+/-" ".."] @operator
["{" "}" "(" ")"] @punctuation.bracket
["," "."] @punctuation.delimiter
