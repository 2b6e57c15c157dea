;;; guardband.el --- guardband protection specs with eglot  -*- lexical-binding: t; -*-

;; A small major mode for `.guard' files and the eglot setup for the
;; guardband language server (`guardband lsp').  Needs Emacs 29 (eglot
;; built in), or Emacs 28 with eglot from GNU ELPA (Debian: elpa-eglot).

;;; Code:

(require 'eglot)

(defgroup guardband nil
  "guardband protection specs."
  :group 'languages)

(defcustom guardband-program "guardband"
  "The guardband binary, started as `guardband lsp'."
  :type 'string)

(defcustom guardband-debounce-ms 150
  "Quiet time after typing before the server checks again."
  :type 'integer)

(defconst guardband--keywords
  (regexp-opt '("regulator" "process" "metal" "pin" "pass" "limit"
                "thermal_shutdown" "foldback" "startup" "conductor"
                "fault" "analysis" "use")
              'symbols))

(defvar guardband-mode-syntax-table
  (let ((table (make-syntax-table)))
    (modify-syntax-entry ?/ ". 12" table)
    (modify-syntax-entry ?\n ">" table)
    (modify-syntax-entry ?_ "_" table)
    (modify-syntax-entry ?\" "\"" table)
    table)
  "Syntax table of `guardband-mode': `//' comments, `_' in names.")

;;;###autoload
(define-derived-mode guardband-mode prog-mode "guard"
  "Major mode for guardband protection specs."
  (setq-local comment-start "// ")
  (setq-local comment-end "")
  (setq-local indent-tabs-mode nil)
  (setq-local tab-width 4)
  (setq-local font-lock-defaults
              `(((,guardband--keywords . font-lock-keyword-face)
                 ("\\_<\\(true\\|false\\)\\_>" . font-lock-constant-face)
                 ("-?[0-9]+\\(?:\\.[0-9]+\\)?" . font-lock-constant-face)))))

;;;###autoload
(add-to-list 'auto-mode-alist '("\\.guard\\'" . guardband-mode))

(add-to-list 'eglot-server-programs
             `(guardband-mode . (,guardband-program "lsp"
                                 :initializationOptions
                                 (:debounceMs ,guardband-debounce-ms :inlayHints t))))

(provide 'guardband)
;;; guardband.el ends here
