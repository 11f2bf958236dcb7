;;; eglot_test.el --- Emacs and eglot drive `knowable lsp'  -*- lexical-binding: t -*-

;; Run by eglot.sh: emacs --batch -l editors/emacs/knowable.el -l this file,
;; with KNOWABLE (the program under test) and LSP_ROOT (tests/lsp) in the
;; environment.  Opens a schema as a user would (find-file: the mode from
;; `knowable-files', then eglot-ensure from its hook), waits for eglot to
;; connect and for the diagnostics, asserts on their rule ids and lines
;; through Flymake, edits the buffer (unsaved) and waits for the new ones,
;; then shuts the server down.  Exits 0 when every step held, 1 otherwise.

;;; Code:

(setq backtrace-on-error-noninteractive nil)
(require 'cl-lib)
(require 'flymake)

(defvar knowable-test-checks 0)

(defun knowable-test-check (ok what)
  "Count WHAT as held when OK, else end Emacs with status 1."
  (if ok
      (progn (setq knowable-test-checks (1+ knowable-test-checks))
             (princ (format "ok - %s\n" what)))
    (princ (format "FAIL: %s\n" what))
    (kill-emacs 1)))

(defun knowable-test-wait (pred what &optional seconds)
  "Wait up to SECONDS (default 30) for PRED to return non-nil; fail with WHAT."
  (let ((deadline (+ (float-time) (or seconds 30))) v)
    (while (and (not (setq v (funcall pred))) (< (float-time) deadline))
      (accept-process-output nil 0.05))
    (knowable-test-check v what)
    v))

(defun knowable-test-findings ()
  "The Flymake diagnostics of the current buffer as (RULE . LINE) pairs."
  (mapcar (lambda (d)
            (let ((text (flymake-diagnostic-text d)))
              (cons (and (string-match "\\[\\([a-z-]+\\)\\]" text) (match-string 1 text))
                    (line-number-at-pos (flymake-diagnostic-beg d)))))
          (flymake-diagnostics)))

(defvar knowable-test-published 0
  "publishDiagnostics notifications eglot has handled.")
(advice-add 'eglot-handle-notification :after
            (lambda (_server method &rest _)
              (when (eq method 'textDocument/publishDiagnostics)
                (setq knowable-test-published (1+ knowable-test-published)))))

(let* ((knowable (getenv "KNOWABLE"))
       (root (getenv "LSP_ROOT"))
       (schema (expand-file-name "bakery/unsold.knowable.yaml" root)))
  (setq knowable-command (list knowable "lsp"))
  (find-file schema)
  (knowable-test-check (eq major-mode 'knowable-mode) "a schema opens in knowable-mode")
  ;; eglot-ensure connects after the command that opened the file.
  (run-hooks 'post-command-hook)
  (let ((server (knowable-test-wait #'eglot-current-server "eglot connects to `knowable lsp'")))
    (knowable-test-check (equal (process-command (jsonrpc--process server)) knowable-command)
                         "through the command of knowable-command")
    ;; Flymake starts once the buffer is shown, which never happens in a
    ;; batch Emacs: start it as showing it would.
    (flymake-start)
    (knowable-test-wait (lambda () (> knowable-test-published 0)) "diagnostics are published")
    (let ((found (knowable-test-wait #'knowable-test-findings "Flymake shows them")))
      (knowable-test-check (member '("after-moment" . 16) found) "after-moment on line 16 (oven_temperature)")
      (knowable-test-check (member '("after-moment" . 24) found) "after-moment on line 24 (loaves_sold_first_hour)")
      (knowable-test-check (member '("inherits-late-input" . 28) found) "inherits-late-input on line 28"))
    ;; The oven temperature made known at dough_mixed: its finding goes,
    ;; and so does the one it caused; the buffer stays unsaved.
    (goto-char (point-min))
    (re-search-forward "^  oven_temperature:\n    type: number\n    known: \\(baked\\)")
    (let ((before knowable-test-published))
      (replace-match "dough_mixed" t t nil 1)
      ;; eglot sends the change from an idle timer, and a batch Emacs is
      ;; never idle: send it as that timer would.
      (eglot--signal-textDocument/didChange)
      (knowable-test-wait (lambda () (> knowable-test-published before)) "new diagnostics after the edit"))
    (let ((found (knowable-test-wait (lambda () (and (not (assoc "inherits-late-input" (knowable-test-findings)))
                                                     (knowable-test-findings)))
                                     "Flymake shows the new ones")))
      (knowable-test-check (not (member '("after-moment" . 16) found)) "the finding on line 16 is gone")
      (knowable-test-check (member '("after-moment" . 24) found) "the one on line 24 stays"))
    (knowable-test-check (buffer-modified-p) "the buffer is still unsaved")
    (eglot-shutdown server)
    (knowable-test-check (not (process-live-p (jsonrpc--process server))) "the server ends on shutdown"))
  (set-buffer-modified-p nil)
  (princ (format "%d checks held\n" knowable-test-checks))
  (kill-emacs 0))

;;; eglot_test.el ends here
