;;; diagnostics.el --- headless Emacs check of editors/emacs  -*- lexical-binding: t; -*-

;; Run by tests/emacs.rs as
;;   emacs --batch -Q -L editors/emacs -l tests/emacs/diagnostics.el
;; with GUARDBAND_BIN (the server binary), GUARDBAND_FILE (a spec to open)
;; and GUARDBAND_OUT (where to write the report).  It opens the file in
;; `guardband-mode', starts eglot, waits for the server's diagnostics to
;; reach Flymake and writes them as JSON:
;;   {"ok": true, "mode": "guardband-mode",
;;    "diagnostics": [{"line": 1, "column": 1, "text": "..."}]}
;; with 1-based lines and character columns, as `guardband check' prints.

;;; Code:

(require 'package)
(package-initialize)
(require 'json)
(require 'flymake)

(defvar guardband-test--file (getenv "GUARDBAND_FILE"))
(defvar guardband-test--out (getenv "GUARDBAND_OUT"))
;; The binary under test, set before guardband.el registers its server.
(defvar guardband-program (getenv "GUARDBAND_BIN"))
(require 'guardband)
;; The file's own folder is its project, so eglot asks nothing.
(add-hook 'project-find-functions
          (lambda (dir) (cons 'transient (file-name-directory guardband-test--file))))

(defun guardband-test--write (ok diagnostics)
  "Write the report with OK and DIAGNOSTICS, then leave Emacs."
  (let ((mode (symbol-name major-mode)))
    (with-temp-file guardband-test--out
      (insert (json-encode
               `((ok . ,(if ok t :json-false))
                 (mode . ,mode)
                 (diagnostics . ,(vconcat diagnostics)))))))
  (kill-emacs 0))

(find-file guardband-test--file)
(let ((buffer (current-buffer))
      (deadline (+ (float-time) 60))
      (found nil))
  ;; What `eglot-ensure' does after the next command, which batch mode
  ;; never runs: connect with the contact `eglot-server-programs' gives.
  (apply #'eglot--connect (eglot--guess-contact))
  (while (and (not found) (< (float-time) deadline))
    (accept-process-output nil 0.2)
    (with-current-buffer buffer
      (when (bound-and-true-p flymake-mode)
        (flymake-start)
        (accept-process-output nil 0.1)
        (setq found (flymake-diagnostics)))))
  (with-current-buffer buffer
    (guardband-test--write
     (and found t)
     (mapcar (lambda (d)
               (let ((beg (flymake-diagnostic-beg d)))
                 (save-excursion
                   (goto-char beg)
                   `((line . ,(line-number-at-pos beg))
                     (column . ,(1+ (- beg (line-beginning-position))))
                     (text . ,(flymake-diagnostic-text d))))))
             (sort found (lambda (a b) (< (flymake-diagnostic-beg a)
                                          (flymake-diagnostic-beg b)))))))))

;;; diagnostics.el ends here
