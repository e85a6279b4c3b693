;;; ringside-test.el --- ERT checks of ringside.el  -*- lexical-binding: t; -*-

;; Run: emacs --batch -Q -L editors/emacs -l editors/emacs/test/ringside-test.el -f ert-run-tests-batch-and-exit
;; With RINGSIDE_BIN set (and eglot available) it also starts that server
;; through eglot on editors/test/sample.loop and runs ringside.plot.

;;; Code:

(require 'ert)
(require 'ringside)

;; eglot may come as a package (Debian's elpa-eglot on Emacs 28); -Q skips
;; both the system package folder and package activation, so do both here.
(require 'package)
(unless (locate-library "eglot")
  (let ((system-elpa "/usr/share/emacs/site-lisp/elpa"))
    (when (file-directory-p system-elpa)
      (add-to-list 'package-directory-list system-elpa)))
  (package-initialize))

(defconst ringside-test-sample
  (expand-file-name "../../test/sample.loop"
                    (file-name-directory (or load-file-name buffer-file-name)))
  "The shared fixture of the editor set-up tests.")

(defun ringside-test-face-at (text &optional offset)
  "Face at the first occurrence of TEXT (plus OFFSET) in the current buffer."
  (save-excursion
    (goto-char (point-min))
    (should (let ((case-fold-search nil)) (search-forward text nil t)))
    (get-text-property (+ (match-beginning 0) (or offset 0)) 'face)))

(defmacro ringside-test-with-sample (&rest body)
  "Run BODY in a `loop-mode' buffer holding the fixture, fontified."
  `(with-temp-buffer
     (insert-file-contents ringside-test-sample)
     (loop-mode)
     (font-lock-ensure)
     ,@body))

(ert-deftest ringside-auto-mode ()
  (should (eq (cdr (assoc "\\.loop\\'" auto-mode-alist)) 'loop-mode)))

(ert-deftest ringside-font-lock ()
  (ringside-test-with-sample
   (should (eq (ringside-test-face-at "Fixture") 'font-lock-comment-face))
   (should (eq (ringside-test-face-at "sample") 'font-lock-keyword-face))
   (should (eq (ringside-test-face-at "ms") 'font-lock-type-face))
   (should (eq (ringside-test-face-at "max") 'font-lock-keyword-face))
   (should (eq (ringside-test-face-at "gain kp" 5) 'font-lock-variable-name-face))
   (should (eq (ringside-test-face-at "block ctl" 6) 'font-lock-type-face))
   (should (eq (ringside-test-face-at "zoh") 'font-lock-builtin-face))
   ;; `7s' is 7 * s: the s is the Laplace variable, not seconds.
   (should (eq (ringside-test-face-at "7s" 1) 'font-lock-constant-face))
   (should (eq (ringside-test-face-at "loop conveyor" 5) 'font-lock-function-name-face))
   (should (eq (ringside-test-face-at "gain_margin") 'font-lock-builtin-face))
   (should (eq (ringside-test-face-at "dB") 'font-lock-type-face))))

(ert-deftest ringside-comments ()
  (ringside-test-with-sample
   (should (equal comment-start "# "))
   (goto-char (point-max))
   (insert "gain extra = 1")
   (comment-region (line-beginning-position) (line-end-position))
   (should (equal (buffer-substring (line-beginning-position) (line-end-position))
                  "# gain extra = 1"))))

(ert-deftest ringside-indent ()
  (with-temp-buffer
    (loop-mode)
    (insert "loop a {\nforward b\n}\n")
    (indent-region (point-min) (point-max))
    (should (equal (buffer-string) "loop a {\n  forward b\n}\n"))))

(ert-deftest ringside-eglot-registration ()
  (skip-unless (require 'eglot nil t))
  (should (member '(loop-mode "ringside" "serve") eglot-server-programs)))

(ert-deftest ringside-eglot-plot ()
  "Starts $RINGSIDE_BIN through eglot and runs ringside.plot."
  (skip-unless (and (getenv "RINGSIDE_BIN") (require 'eglot nil t)))
  (let* ((eglot-server-programs
          `((loop-mode ,(getenv "RINGSIDE_BIN") "serve")))
         (buf (find-file-noselect ringside-test-sample)))
    (unwind-protect
        (with-current-buffer buf
          (should (eq major-mode 'loop-mode))
          ;; `eglot-ensure' waits for the command loop, which batch mode
          ;; lacks; start the server the way M-x eglot would.
          (apply #'eglot (eglot--guess-contact))
          (let ((deadline (+ (float-time) 10)) server)
            (while (and (not (setq server (eglot-current-server)))
                        (< (float-time) deadline))
              (accept-process-output nil 0.1))
            (should server)
            (let ((result (jsonrpc-request
                           server :workspace/executeCommand
                           `(:command "ringside.plot"
                             :arguments [(:uri ,(eglot--path-to-uri buffer-file-name)
                                          :write :json-false)]))))
              (should (string-match-p "<svg" (plist-get result :html))))
            (eglot-shutdown server)))
      (kill-buffer buf))))

;;; ringside-test.el ends here
